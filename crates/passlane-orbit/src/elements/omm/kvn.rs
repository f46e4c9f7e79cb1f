//! OMM in KVN (`KEYWORD = value` lines; CCSDS 502.0). Each message starts at
//! its `CCSDS_OMM_VERS` line; `COMMENT` lines and units in brackets after a
//! value (`15.2 [rev/day]`) are tolerated.

use super::super::lines::{excerpt, lines};
use super::super::{LoadReport, Severity};
use super::{Record, diag, note_if_empty};

/// Structure lines without `=` that carry no data.
const MARKERS: &[&str] = &[
    "META_START",
    "META_STOP",
    "DATA_START",
    "DATA_STOP",
    "COVARIANCE_START",
    "COVARIANCE_STOP",
];

pub(in crate::elements) fn load_kvn(bytes: &[u8], file: &str, report: &mut LoadReport) {
    let (sets_before, diags_before) = (report.sets.len(), report.finding_count());
    let mut current: Option<Record<'_>> = None;
    // First line of a run of keyword lines outside any message (reported once).
    let mut orphan_reported = false;
    for (n, raw) in lines(bytes) {
        let Ok(text) = std::str::from_utf8(raw) else {
            let message = format!("not valid UTF-8 text ({:?}); record skipped", excerpt(raw));
            match &mut current {
                Some(rec) => rec.error(n, "", message),
                None => report.push(diag(file, Severity::Error, n, "", message)),
            }
            continue;
        };
        let line = text.trim();
        if line.is_empty() || line.starts_with("COMMENT") {
            continue;
        }
        let Some((key, value)) = line.split_once('=') else {
            if MARKERS.contains(&line) {
                continue;
            }
            let message = format!(
                "not a KEYWORD = value line: {:?}; record skipped",
                excerpt(raw)
            );
            match &mut current {
                Some(rec) => rec.error(n, "", message),
                None => report.push(diag(file, Severity::Error, n, "", message)),
            }
            continue;
        };
        let key = key.trim();
        let value = strip_units(value.trim());
        if key == "CCSDS_OMM_VERS" {
            if let Some(rec) = current.take() {
                rec.finish(report);
            }
            current = Some(Record::new(file, n));
            orphan_reported = false;
            continue;
        }
        match &mut current {
            Some(rec) => rec.insert(key, value.to_string(), n),
            None if !orphan_reported => {
                orphan_reported = true;
                report.push(diag(
                    file,
                    Severity::Error,
                    n,
                    key,
                    "keyword before the first CCSDS_OMM_VERS line; ignored".to_string(),
                ));
            }
            None => {}
        }
    }
    if let Some(rec) = current.take() {
        rec.finish(report);
    }
    note_if_empty(report, file, sets_before, diags_before);
}

/// `15.2 [rev/day]` → `15.2`.
fn strip_units(value: &str) -> &str {
    match (value.ends_with(']'), value.rfind('[')) {
        (true, Some(i)) => value[..i].trim_end(),
        _ => value,
    }
}
