//! Pieces every command shares: loading element files with diagnostics on
//! stderr, the scenario, stations from the command line, and times.

use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::{Context, Result, bail};
use passlane_orbit::{ElementSet, LoadOptions, LoadReport, UtcTime, elements};
use passlane_plan::station::{StationSet, same_station_name};
use passlane_plan::{Scenario, Station};

use super::args::{FleetArgs, StationArgs, WindowArgs};

/// Prints one line on stderr with every control character and terminal
/// escape shown as `?`: the text may quote a file (names, excerpts), and a
/// file must not be able to re-program the terminal.
pub fn say(text: impl std::fmt::Display) {
    eprintln!("{}", passlane_orbit::text::clean(&text.to_string(), true));
}

/// Loads element files, prints every diagnostic to stderr as `file:line: ...`,
/// and returns the good sets. Fails only when nothing at all loaded.
pub fn load_elements(paths: &[PathBuf], lenient: bool) -> Result<LoadReport> {
    let mut report = LoadReport::default();
    for p in paths {
        let bytes = passlane_files::read_limited(p, passlane_files::DEFAULT_READ_LIMIT_BYTES)
            .with_context(|| format!("cannot read element file {}", p.display()))?;
        let r = elements::load(&bytes, &p.display().to_string(), LoadOptions { lenient });
        report.merge(r);
    }
    for d in &report.diagnostics {
        say(d);
    }
    if let Some(note) = report.omitted_note() {
        say(note);
    }
    Ok(report)
}

/// Loads element files and insists on at least one good set.
pub fn load_fleet(paths: &[PathBuf], lenient: bool) -> Result<Vec<ElementSet>> {
    let report = load_elements(paths, lenient)?;
    if report.sets.is_empty() {
        bail!("no element set loaded from {}", join_paths(paths));
    }
    Ok(report.sets)
}

/// `--ephemeris` value: `FILE`, or `CATALOG=FILE` (digits before `=`).
pub fn ephemeris_spec(spec: &str) -> Result<(PathBuf, Option<u32>)> {
    if let Some((n, file)) = spec.split_once('=')
        && !n.is_empty()
        && n.bytes().all(|b| b.is_ascii_digit())
    {
        let n: u32 = n.parse().map_err(|_| {
            anyhow::anyhow!("--ephemeris {spec:?}: catalog number {n} is too large")
        })?;
        if file.is_empty() {
            bail!("--ephemeris {spec:?}: give CATALOG=FILE");
        }
        return Ok((PathBuf::from(file), Some(n)));
    }
    Ok((PathBuf::from(spec), None))
}

/// Reads operator ephemerides (CCSDS OEM) and puts them into the fleet,
/// printing every diagnostic to stderr as `file:line: ...`; a file that
/// cannot be used is reported and the others still load.
pub fn attach_ephemerides(
    fleet: &mut Vec<ElementSet>,
    files: &[(PathBuf, Option<u32>)],
    eop: &passlane_orbit::EarthOrientation,
) -> Result<()> {
    use passlane_orbit::ephemeris::{EphemerisInput, attach_to_fleet, load_oem};
    let mut inputs = Vec::new();
    for (path, catalog_number) in files {
        let bytes = passlane_files::read_limited(path, passlane_files::DEFAULT_READ_LIMIT_BYTES)
            .with_context(|| format!("cannot read ephemeris file {}", path.display()))?;
        let (eph, diagnostics) = load_oem(&bytes, &path.display().to_string(), eop);
        for d in &diagnostics {
            say(d);
        }
        if let Some(ephemeris) = eph {
            inputs.push(EphemerisInput {
                ephemeris,
                catalog_number: *catalog_number,
            });
        }
    }
    for d in attach_to_fleet(fleet, inputs) {
        say(d);
    }
    Ok(())
}

pub fn join_paths(paths: &[PathBuf]) -> String {
    paths
        .iter()
        .map(|p| p.display().to_string())
        .collect::<Vec<_>>()
        .join(", ")
}

/// Reads and validates a scenario file.
pub fn load_scenario(path: &Path) -> Result<Scenario> {
    // A save of this scenario that was interrupted (crash, power loss) leaves
    // a temporary beside it; the scenario itself is intact, so clear them.
    passlane_files::remove_stale_temporaries(path);
    let text = passlane_files::read_text_limited(path, 64 * 1024 * 1024)
        .with_context(|| format!("cannot read scenario {}", path.display()))?;
    let (scenario, warnings) =
        Scenario::from_json_with_warnings(&text, &path.display().to_string())?;
    for w in warnings {
        say(format!("warning: {w}"));
    }
    Ok(scenario)
}

/// Paths in a scenario are relative to the scenario file's folder.
pub fn resolve(scenario_path: &Path, file: &str) -> PathBuf {
    let p = Path::new(file);
    if p.is_absolute() {
        p.to_path_buf()
    } else {
        scenario_path.parent().unwrap_or(Path::new(".")).join(p)
    }
}

/// Where a command's fleet, stations and window come from: the raw options,
/// before anything is read.
pub struct Sources<'a> {
    pub scenario: Option<&'a Path>,
    pub elements: &'a [PathBuf],
    /// `--ephemeris` values: FILE or CATALOG=FILE.
    pub ephemerides: &'a [String],
    pub stations: &'a [String],
    pub start: Option<UtcTime>,
    pub end: Option<UtcTime>,
    pub lenient: bool,
    /// `--allow-stale`: compute even with element sets beyond
    /// [`passlane_orbit::REFUSE_AFTER_DAYS`] from the window.
    pub allow_stale: bool,
    /// `--ut1-utc-s`, where the command has it: also used to turn an
    /// Earth-fixed (ITRF) ephemeris into TEME at load.
    pub ut1_utc_s: Option<f64>,
}

impl<'a> Sources<'a> {
    /// The shared options of most commands (no stations).
    pub fn new(fleet: &'a FleetArgs, window: Option<&WindowArgs>) -> Self {
        Sources {
            scenario: fleet.scenario.as_deref(),
            elements: &fleet.elements,
            ephemerides: &fleet.ephemeris,
            stations: &[],
            start: window.and_then(|w| w.start),
            end: window.and_then(|w| w.end),
            lenient: fleet.lenient,
            allow_stale: window.is_some_and(|w| w.allow_stale),
            ut1_utc_s: None,
        }
    }

    pub fn with_ut1_utc_s(self, ut1_utc_s: Option<f64>) -> Self {
        Sources { ut1_utc_s, ..self }
    }

    pub fn with_stations(self, stations: &'a StationArgs) -> Self {
        Sources {
            stations: &stations.station,
            ..self
        }
    }
}

/// The fleet, stations and window from `--scenario`, `--elements`, `--station`,
/// `--start`/`--end`: command-line values take precedence over the scenario's.
pub struct Inputs {
    pub scenario: Option<(PathBuf, Scenario)>,
    pub sets: Vec<ElementSet>,
    pub stations: Vec<Station>,
    pub start: Option<UtcTime>,
    pub end: Option<UtcTime>,
    pub allow_stale: bool,
}

pub fn gather(sources: &Sources, need_stations: bool) -> Result<Inputs> {
    let scenario = match sources.scenario {
        Some(path) => {
            let s = load_scenario(path)?;
            Some((path.to_path_buf(), s))
        }
        None => None,
    };
    let mut element_paths: Vec<PathBuf> = sources.elements.to_vec();
    if element_paths.is_empty()
        && let Some((p, s)) = &scenario
    {
        element_paths = s.element_files.iter().map(|f| resolve(p, f)).collect();
    }
    let mut ephemerides: Vec<(PathBuf, Option<u32>)> = Vec::new();
    for spec in sources.ephemerides {
        ephemerides.push(ephemeris_spec(spec)?);
    }
    if ephemerides.is_empty()
        && let Some((p, s)) = &scenario
    {
        ephemerides = s
            .ephemeris_files
            .iter()
            .map(|e| (resolve(p, &e.file), e.catalog_number))
            .collect();
    }
    if element_paths.is_empty() && ephemerides.is_empty() {
        bail!(
            "no element sets: give --elements FILE or --ephemeris FILE (or --scenario FILE with element_files)"
        );
    }
    let mut sets = if element_paths.is_empty() {
        Vec::new()
    } else {
        load_fleet(&element_paths, sources.lenient)?
    };
    if !ephemerides.is_empty() {
        let mut eop = scenario
            .as_ref()
            .map(|(_, s)| s.earth_orientation)
            .unwrap_or_default();
        if let Some(v) = sources.ut1_utc_s {
            eop.ut1_utc_s = v;
        }
        attach_ephemerides(&mut sets, &ephemerides, &eop)?;
        if sets.is_empty() {
            bail!("nothing loaded: no element set, and no ephemeris could be used");
        }
    }
    let mut stations = Vec::new();
    for s in sources.stations {
        // NAME,LAT,LON,HEIGHT defines a station; a bare name picks one of the
        // scenario's (with its mask, mount and channels).
        if s.contains(',') {
            stations.push(Station::parse_inline(s).map_err(|e| anyhow::anyhow!("--station: {e}"))?);
            continue;
        }
        let known: Vec<&Station> = scenario
            .as_ref()
            .map(|(_, sc)| sc.stations.iter().collect())
            .unwrap_or_default();
        match known.iter().find(|st| same_station_name(&st.name, s)) {
            Some(st) => stations.push((*st).clone()),
            None if known.is_empty() => bail!(
                "--station {s:?}: give NAME,LAT_DEG,LON_DEG,HEIGHT_M, or a station name together with --scenario FILE"
            ),
            None => bail!(
                "--station {s:?}: the scenario has no such station (it has: {})",
                known
                    .iter()
                    .map(|st| st.name.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        }
    }
    if stations.is_empty()
        && let Some((_, s)) = &scenario
    {
        stations = s.stations.clone();
    }
    if need_stations && stations.is_empty() {
        bail!(
            "no stations: give --station NAME,LAT_DEG,LON_DEG,HEIGHT_M (repeatable) or --scenario FILE"
        );
    }
    // One list, validated once: every pass names its station by its index
    // here, so two stations may not share a name.
    let stations = StationSet::new(stations)
        .map_err(|e| anyhow::anyhow!("--station: {e}"))?
        .into_vec();
    let window = scenario.as_ref().and_then(|(_, s)| s.window);
    let start = sources.start.or(window.map(|w| w.start));
    let end = sources.end.or(window.map(|w| w.end));
    Ok(Inputs {
        scenario,
        sets,
        stations,
        start,
        end,
        allow_stale: sources.allow_stale,
    })
}

pub fn window(inputs: &Inputs) -> Result<(UtcTime, UtcTime)> {
    let (Some(start), Some(end)) = (inputs.start, inputs.end) else {
        bail!("give --start ISO and --end ISO (or a scenario with a window)");
    };
    if end <= start {
        bail!("--end {end} is not after --start {start}");
    }
    check_element_age(&inputs.sets, start, end, inputs.allow_stale, "the window")?;
    Ok((start, end))
}

/// Warns on stderr about element sets more than
/// [`passlane_orbit::STALE_AFTER_DAYS`] from `[start, end]`, and refuses
/// (unless `allow_stale`) when any is more than
/// [`passlane_orbit::REFUSE_AFTER_DAYS`] away: an old set gives confident,
/// wrong answers. `what` names the span in the messages ("the window").
pub fn check_element_age(
    sets: &[ElementSet],
    start: UtcTime,
    end: UtcTime,
    allow_stale: bool,
    what: &str,
) -> Result<()> {
    use passlane_orbit::{REFUSE_AFTER_DAYS, STALE_AFTER_DAYS};
    let stale = passlane_orbit::stale_sets(sets, start, end);
    let Some(&(_, worst)) = stale.first() else {
        return Ok(());
    };
    const SHOWN: usize = 5;
    let list = |v: &[(&ElementSet, f64)]| {
        let mut t = v
            .iter()
            .take(SHOWN)
            .map(|(s, d)| format!("{} ({}) {d:.1} d", s.name, s.catalog_number))
            .collect::<Vec<_>>()
            .join(", ");
        if v.len() > SHOWN {
            t.push_str(&format!(" and {} more", v.len() - SHOWN));
        }
        t
    };
    let too_old: Vec<(&ElementSet, f64)> = stale
        .iter()
        .copied()
        .filter(|(_, d)| *d > REFUSE_AFTER_DAYS)
        .collect();
    if !too_old.is_empty() && !allow_stale {
        bail!(
            "{} element set(s) are more than {REFUSE_AFTER_DAYS:.0} days from {what} (up to {worst:.0} days): {}. \
             Their passes and close approaches would look precise and be wrong; load newer element sets, \
             or give --allow-stale to compute anyway",
            too_old.len(),
            list(&too_old)
        );
    }
    say(format!(
        "warning: {} element set(s) are more than {STALE_AFTER_DAYS:.0} days from {what} (up to {worst:.1} days): {}. \
         Common practice: SGP4 element sets degrade by about 1-3 km a day in LEO, so times and distances \
         that rest on them can be well off{}",
        stale.len(),
        list(&stale),
        if worst > REFUSE_AFTER_DAYS {
            " (computed anyway: --allow-stale)"
        } else {
            ""
        }
    ));
    Ok(())
}

/// Picks one satellite by catalog number or (case-insensitive) name.
pub fn pick_satellite<'a>(sets: &'a [ElementSet], key: &str) -> Result<&'a ElementSet> {
    if let Ok(n) = key.trim().parse::<u32>()
        && let Some(s) = sets.iter().find(|s| s.catalog_number == n)
    {
        return Ok(s);
    }
    let lower = key.trim().to_lowercase();
    let matches: Vec<&ElementSet> = sets
        .iter()
        .filter(|s| s.name.to_lowercase() == lower)
        .collect();
    match matches.as_slice() {
        [one] => Ok(one),
        [] => {
            let partial: Vec<&ElementSet> = sets
                .iter()
                .filter(|s| s.name.to_lowercase().contains(&lower))
                .collect();
            match partial.as_slice() {
                [one] => Ok(one),
                [] => bail!("no satellite named or numbered {key:?}"),
                many => bail!(
                    "{key:?} matches several satellites: {}",
                    many.iter()
                        .map(|s| s.name.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            }
        }
        _ => bail!("{key:?} names several satellites; use the catalog number"),
    }
}

/// Output format choice shared by the commands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Table,
    Csv,
    Json,
}

/// Shortens a name for a fixed-width table column.
pub fn fit(s: &str, width: usize) -> String {
    if s.chars().count() <= width {
        format!("{s:<width$}")
    } else {
        let mut t: String = s.chars().take(width.saturating_sub(1)).collect();
        t.push('…');
        t
    }
}

/// Writes `value` as JSON and a newline, one record per line: the members
/// of a top-level array or object each start a line, everything inside them
/// is compact. Scripts parse it as any JSON; people can grep it line by
/// line. Fully indented output cost a sixth of the whole passes command
/// (callgrind: the indentation writes and the doubled size), a record per
/// line about half of that.
pub fn write_json(out: &mut dyn Write, value: &impl serde::Serialize) -> Result<()> {
    // serde_json writes token by token; straight into a `dyn Write` that is
    // one indirect call per token, so it writes through a buffer of its own.
    let mut buffered = std::io::BufWriter::with_capacity(1 << 16, out);
    let mut ser = serde_json::Serializer::with_formatter(&mut buffered, RecordLines { depth: 0 });
    value.serialize(&mut ser)?;
    writeln!(buffered)?;
    buffered.flush()?;
    Ok(())
}

/// The formatter of [`write_json`].
struct RecordLines {
    depth: usize,
}

impl RecordLines {
    fn open<W: ?Sized + Write>(&mut self, w: &mut W, bracket: &[u8]) -> std::io::Result<()> {
        self.depth += 1;
        w.write_all(bracket)
    }

    fn close<W: ?Sized + Write>(&mut self, w: &mut W, bracket: &[u8]) -> std::io::Result<()> {
        self.depth -= 1;
        if self.depth == 0 {
            w.write_all(b"\n")?;
        }
        w.write_all(bracket)
    }

    fn member<W: ?Sized + Write>(&mut self, w: &mut W, first: bool) -> std::io::Result<()> {
        if !first {
            w.write_all(b",")?;
        }
        if self.depth == 1 {
            w.write_all(b"\n")?;
        }
        Ok(())
    }
}

impl serde_json::ser::Formatter for RecordLines {
    fn begin_array<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.open(w, b"[")
    }
    fn end_array<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.close(w, b"]")
    }
    fn begin_array_value<W: ?Sized + Write>(
        &mut self,
        w: &mut W,
        first: bool,
    ) -> std::io::Result<()> {
        self.member(w, first)
    }
    fn begin_object<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.open(w, b"{")
    }
    fn end_object<W: ?Sized + Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.close(w, b"}")
    }
    fn begin_object_key<W: ?Sized + Write>(
        &mut self,
        w: &mut W,
        first: bool,
    ) -> std::io::Result<()> {
        self.member(w, first)
    }
}
