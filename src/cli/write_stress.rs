//! `passlane __write-stress PATH [BYTES [FIRST_ROUND]]`: a hidden command for the crash-safety
//! test. It clears temporaries left by an earlier run (as every command does
//! before it saves), then keeps rewriting PATH atomically with a new
//! self-checking content until it is killed, or after a bounded number of
//! rounds. Not listed in the help: it exists only so that a test can SIGKILL a
//! real process in the middle of a save.

use std::io::Write;

use anyhow::{Context, Result};

use super::args::WriteStressArgs;

/// Upper bound on rounds, so a forgotten child stops on its own.
const MAX_ROUNDS: u64 = 100_000;

pub fn run(args: &WriteStressArgs, out: &mut dyn Write) -> Result<()> {
    let (path, bytes, first_round) = (args.path.as_path(), args.bytes, args.first_round);
    let removed = passlane_files::remove_stale_temporaries(path);
    writeln!(out, "removed {removed} stale temporaries")?;
    out.flush()?;
    for round in first_round..first_round.saturating_add(MAX_ROUNDS) {
        let content = stress_content(round, bytes);
        passlane_files::write_atomic(path, &content)
            .with_context(|| format!("cannot write {}", path.display()))?;
    }
    Ok(())
}

/// A file of about `bytes` bytes whose first line carries a checksum of the
/// rest: `passlane-write-stress ROUND FNV1A64-HEX\n` then the body.
pub fn stress_content(round: u64, bytes: usize) -> Vec<u8> {
    let mut body = Vec::with_capacity(bytes + 64);
    let mut k = 0u64;
    while body.len() < bytes {
        // Each line differs from round to round, so a mix of two rounds
        // cannot pass the checksum.
        let _ = writeln!(
            body,
            "round {round} line {k} {:016x}",
            round.wrapping_mul(0x9e37_79b9_7f4a_7c15) ^ k
        );
        k += 1;
    }
    let mut out = format!("passlane-write-stress {round} {:016x}\n", fnv1a64(&body)).into_bytes();
    out.extend_from_slice(&body);
    out
}

/// FNV-1a, 64-bit: enough to detect a torn or mixed file, not a cryptographic hash.
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}
