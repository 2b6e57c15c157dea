//! `guardband.toml`: per-rule severities, the numbers the rules use and
//! the driver's limits. Unknown keys, unknown rule names and bad values are
//! errors pointing at their line in the file; the defaults stand in for any
//! bad value. The keys are documented in REFERENCE.md.

use guardband_model::{Diagnostic, FileId, Severity, Workspace, did_you_mean};
use guardband_rules::Options;
use guardband_rules::derive::RangeMode;

/// What `guardband.toml` says: the rules' options, and how the driver runs.
#[derive(Debug, Clone, Default)]
pub struct Config {
    /// The numbers and severities the derivations and rules read.
    pub options: Options,
    /// Exit 1 on warnings too.
    pub deny_warnings: bool,
    /// Where the file is, if there is one.
    pub file: Option<FileId>,
    /// Limits on file size, nesting, imports and evaluation (`[limits]`).
    pub limits: guardband_model::Limits,
    /// The results files named by `evidence = [...]`, as written
    /// (relative to the workspace root).
    pub evidence_paths: Vec<String>,
    /// The results files of this check, as files of its workspace.
    pub evidence_files: Vec<FileId>,
    /// What the results files hold (the netlists' hashes are added by the
    /// check, which knows the circuits).
    pub evidence: guardband_rules::evidence::Evidence,
}

fn key_span(text: &str, key: &str) -> std::ops::Range<usize> {
    let mut offset = 0;
    for line in text.split_inclusive('\n') {
        let trimmed = line.trim_start();
        let indent = line.len() - trimmed.len();
        let bare = trimmed.trim_start_matches('"');
        if bare.starts_with(key)
            && bare[key.len()..]
                .trim_start_matches('"')
                .trim_start()
                .starts_with('=')
        {
            return offset + indent..offset + indent + trimmed.find('=').unwrap_or(key.len());
        }
        offset += line.len();
    }
    0..0
}

/// Parses a quantity string like `"20 %"` or `"10 yr"` to SI.
fn quantity(text: &str) -> Option<(f64, guardband_units::QuantityKind)> {
    let text = text.trim();
    let split = text
        .find(|c: char| {
            !(c.is_ascii_digit() || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E')
        })
        .unwrap_or(text.len());
    let (num, unit) = text.split_at(split);
    let n: f64 = num.trim().parse().ok()?;
    let unit = unit.trim();
    if unit.is_empty() {
        return Some((n, guardband_units::QuantityKind::NONE));
    }
    let u = guardband_units::parse_unit(unit).ok()?;
    Some((u.to_si(n), u.kind))
}

/// A byte count: an integer, or a string such as `"16 MiB"` or `"512 KiB"`.
fn byte_count(value: &toml::Value) -> Option<usize> {
    match value {
        toml::Value::Integer(i) if *i > 0 => usize::try_from(*i).ok(),
        toml::Value::String(s) => {
            let s = s.trim();
            let (number, unit) = s
                .find(|c: char| !(c.is_ascii_digit() || c == '.'))
                .map(|i| (s[..i].trim(), s[i..].trim()))
                .unwrap_or((s, ""));
            let n: f64 = number.parse().ok()?;
            let factor = match unit {
                "" | "B" | "bytes" => 1.0,
                "KiB" => 1024.0,
                "MiB" => 1024.0 * 1024.0,
                "GiB" => 1024.0 * 1024.0 * 1024.0,
                _ => return None,
            };
            let bytes = n * factor;
            (1.0..1e15).contains(&bytes).then_some(bytes as usize)
        }
        _ => None,
    }
}

/// Reads a `[limits]` table; problems come back as (key, message, help).
fn parse_limits(table: &toml::Table) -> (guardband_model::Limits, Vec<(String, String, String)>) {
    let mut limits = guardband_model::Limits::default();
    let mut problems = Vec::new();
    let count = |v: &toml::Value, max: u64| -> Option<u64> {
        v.as_integer()
            .and_then(|i| u64::try_from(i).ok())
            .filter(|i| *i >= 1 && *i <= max)
    };
    for (key, value) in table {
        let bad = |what: &str| {
            (
                key.clone(),
                format!("`{key}` takes {what}"),
                format!(
                    "write e.g. `{key} = {}`",
                    match key.as_str() {
                        "max_file_size" => "\"16 MiB\"",
                        "max_nesting" => "48",
                        "max_import_depth" => "32",
                        "max_files" => "10000",
                        "max_findings_per_rule" => "200",
                        _ => "50000000",
                    }
                ),
            )
        };
        match key.as_str() {
            "max_file_size" => match byte_count(value) {
                Some(n) => limits.max_file_bytes = n,
                None => problems.push(bad("a size such as \"16 MiB\" or a number of bytes")),
            },
            "max_nesting" => match count(value, guardband_syntax::HARD_MAX_NESTING as u64) {
                Some(n) => limits.max_nesting = n as usize,
                None => problems.push(bad(&format!(
                    "a whole number from 1 to {}",
                    guardband_syntax::HARD_MAX_NESTING
                ))),
            },
            "max_import_depth" => match count(value, 10_000) {
                Some(n) => limits.max_import_depth = n as usize,
                None => problems.push(bad("a whole number from 1 to 10000")),
            },
            "max_files" => match count(value, 10_000_000) {
                Some(n) => limits.max_files = n as usize,
                None => problems.push(bad("a whole number from 1 to 10000000")),
            },
            "max_eval_steps" => match count(value, u64::MAX >> 1) {
                Some(n) => limits.max_eval_steps = n,
                None => problems.push(bad("a positive whole number")),
            },
            "max_findings_per_rule" => match count(value, 10_000_000) {
                Some(n) => limits.max_findings_per_rule = n as usize,
                None => problems.push(bad("a whole number from 1 to 10000000")),
            },
            other => {
                let known = [
                    "max_file_size",
                    "max_nesting",
                    "max_import_depth",
                    "max_files",
                    "max_eval_steps",
                    "max_findings_per_rule",
                ];
                let help = did_you_mean(other, known.iter().copied())
                    .map(|s| format!("did you mean `{s}`?"))
                    .unwrap_or_else(|| format!("known keys: {}", known.join(", ")));
                problems.push((
                    other.to_string(),
                    format!("unknown key `{other}` in [limits]"),
                    help,
                ));
            }
        }
    }
    (limits, problems)
}

/// The most of `guardband.toml` that is read (it is a page of settings).
const CONFIG_MAX_BYTES: usize = 1024 * 1024;

/// `guardband.toml` read and parsed once, then applied to any number of
/// checks: the file-by-file check applies it to every file's check, and its
/// `[limits]` are known before anything is loaded.
#[derive(Debug, Clone)]
pub struct ConfigFile {
    path: std::path::PathBuf,
    /// The file's text, if there is one.
    text: Option<String>,
    /// Its settings, `file` not yet set.
    config: Config,
    /// Its problems, pointing at [`ConfigFile::UNPLACED`] until applied.
    diagnostics: Vec<Diagnostic>,
    /// The results files read, each with its measurements and problems
    /// (pointing at [`ConfigFile::UNPLACED`] until applied).
    evidence: Vec<EvidenceText>,
    /// Imported spec files parsed once for every check this configuration
    /// is applied to in one run, once [`ConfigFile::share_imports`] asked
    /// for it (a single check, as the server's on each edit, shares nothing).
    parses: Option<std::sync::Arc<guardband_model::SharedParses>>,
}

/// One results file as read.
#[derive(Debug, Clone)]
struct EvidenceText {
    path: std::path::PathBuf,
    text: String,
    measurements: Vec<guardband_rules::evidence::Measurement>,
    diagnostics: Vec<Diagnostic>,
}

impl ConfigFile {
    /// The file id problems carry before the file joins a workspace.
    const UNPLACED: FileId = FileId(u32::MAX);

    /// Reads `guardband.toml` at `root` (a canonical path) through `read`;
    /// a missing file gives the defaults.
    pub fn read(root: &std::path::Path, read: &guardband_model::Read) -> ConfigFile {
        let path = root.join("guardband.toml");
        let Ok(bytes) = read(&path, CONFIG_MAX_BYTES) else {
            return ConfigFile {
                path,
                text: None,
                config: Config::default(),
                diagnostics: Vec::new(),
                evidence: Vec::new(),
                parses: None,
            };
        };
        let text = String::from_utf8_lossy(&bytes).into_owned();
        let (config, mut diagnostics) = Config::parse(&text, Self::UNPLACED);
        let mut file = ConfigFile {
            path,
            text: None,
            config,
            diagnostics: Vec::new(),
            evidence: Vec::new(),
            parses: None,
        };
        for written in file.config.evidence_paths.clone() {
            let path = root.join(&written);
            if let Err(e) = file.add_evidence(&path, read) {
                diagnostics.push(
                    Diagnostic::error(
                        "config",
                        Self::UNPLACED,
                        key_span(&text, "evidence"),
                        format!("results file `{written}` cannot be read: {e}"),
                    )
                    .primary("named here"),
                );
            }
        }
        file.text = Some(text);
        file.diagnostics = diagnostics;
        file
    }

    /// Reads one more results file (a path the command line names).
    pub fn add_evidence(
        &mut self,
        path: &std::path::Path,
        read: &guardband_model::Read,
    ) -> std::io::Result<()> {
        let bytes = read(path, self.config.limits.max_file_bytes)?;
        let text = String::from_utf8(bytes)
            .map_err(|_| std::io::Error::new(std::io::ErrorKind::InvalidData, "not UTF-8 text"))?;
        let (measurements, diagnostics) = crate::evidence::read(&text, Self::UNPLACED);
        self.evidence.push(EvidenceText {
            path: path.to_path_buf(),
            text,
            measurements,
            diagnostics,
        });
        Ok(())
    }

    /// The limits, for loading files before the rest is applied.
    pub fn limits(&self) -> &guardband_model::Limits {
        &self.config.limits
    }

    /// Shares imported files' parses among the checks this configuration
    /// is applied to from now on (a run of many checks).
    pub fn share_imports(&mut self) {
        self.parses.get_or_insert_with(Default::default);
    }

    /// The imported files' parses shared by the checks of this run, if any.
    pub fn shared_parses(&self) -> Option<&guardband_model::SharedParses> {
        self.parses.as_deref()
    }

    /// Adds the file to `ws` (so that its problems can be shown) and
    /// returns the settings and the problems, pointing into it.
    pub fn apply(&self, ws: &mut Workspace) -> (Config, Vec<Diagnostic>) {
        let mut config = self.config.clone();
        let mut diagnostics = Vec::new();
        if let Some(text) = &self.text {
            let file = ws.add_text_file(self.path.clone(), text.clone());
            diagnostics.extend(placed(&self.diagnostics, file));
            config.file = Some(file);
        }
        config.evidence.given = !self.evidence.is_empty();
        for e in &self.evidence {
            let file = ws.add_text_file(e.path.clone(), e.text.clone());
            config.evidence_files.push(file);
            diagnostics.extend(placed(&e.diagnostics, file));
            config
                .evidence
                .measurements
                .extend(e.measurements.iter().cloned().map(|mut m| {
                    m.file = file;
                    m
                }));
        }
        (config, diagnostics)
    }
}

/// Problems read before their file joined the workspace, pointing into it.
fn placed(diagnostics: &[Diagnostic], file: FileId) -> Vec<Diagnostic> {
    let mut out = diagnostics.to_vec();
    for d in &mut out {
        d.file = file;
        for l in &mut d.labels {
            l.file = file;
        }
    }
    out
}

impl Config {
    /// The settings in `text`, with its problems as diagnostics in `file`;
    /// the defaults stand in for any bad value.
    fn parse(text: &str, file: FileId) -> (Config, Vec<Diagnostic>) {
        let mut config = Config::default();
        let mut diags = Vec::new();
        let bad = |key: &str, msg: String, help: &str| {
            Diagnostic::error("config", file, key_span(text, key), msg)
                .primary("here")
                .help(help.to_string())
        };
        let table: toml::Table = match text.parse() {
            Ok(t) => t,
            Err(e) => {
                let span = e.span().unwrap_or(0..0);
                diags.push(
                    Diagnostic::error(
                        "config",
                        file,
                        span,
                        format!("guardband.toml is not valid TOML: {}", e.message()),
                    )
                    .primary("here"),
                );
                return (config, diags);
            }
        };
        let known = [
            "margin",
            "statistical",
            "sigma",
            "ranges",
            "escape_ppm",
            "lifetime",
            "deny",
            "rules",
            "limits",
            "evidence",
        ];
        for (key, value) in &table {
            match key.as_str() {
                "margin" => match value {
                    toml::Value::Float(f) => config.options.margin = *f,
                    toml::Value::String(s) => match quantity(s) {
                        Some((v, k)) if k.dim.is_none() => config.options.margin = v,
                        _ => diags.push(bad(
                            key,
                            format!("`margin = \"{s}\"` is not a percentage"),
                            "write e.g. `margin = \"20 %\"`",
                        )),
                    },
                    _ => diags.push(bad(
                        key,
                        "`margin` takes a percentage".into(),
                        "write e.g. `margin = \"20 %\"`",
                    )),
                },
                "statistical" => match value {
                    toml::Value::Boolean(b) => config.options.statistical = *b,
                    _ => diags.push(bad(
                        key,
                        "`statistical` takes true or false".into(),
                        "write `statistical = true`",
                    )),
                },
                "sigma" => match value {
                    toml::Value::Float(f) if *f > 0.0 => config.options.sigma = *f,
                    toml::Value::Integer(i) if *i > 0 => config.options.sigma = *i as f64,
                    _ => diags.push(bad(
                        key,
                        "`sigma` takes a positive number".into(),
                        "write e.g. `sigma = 3`",
                    )),
                },
                "ranges" => match value.as_str() {
                    Some("uniform") => config.options.ranges = RangeMode::Uniform,
                    Some("bound") => config.options.ranges = RangeMode::Bound,
                    _ => diags.push(bad(
                        key,
                        "`ranges` takes \"uniform\" or \"bound\"".into(),
                        "write `ranges = \"uniform\"`",
                    )),
                },
                "escape_ppm" => match value {
                    toml::Value::Float(f) if *f >= 0.0 => config.options.escape_ppm = *f,
                    toml::Value::Integer(i) if *i >= 0 => config.options.escape_ppm = *i as f64,
                    _ => diags.push(bad(
                        key,
                        "`escape_ppm` takes a number of parts per million".into(),
                        "write e.g. `escape_ppm = 1`",
                    )),
                },
                "lifetime" => match value.as_str().and_then(quantity) {
                    Some((v, k)) if k.dim == guardband_units::Dimension::TIME && v > 0.0 => {
                        config.options.lifetime = Some(v)
                    }
                    _ => diags.push(bad(
                        key,
                        "`lifetime` takes a time such as \"10 yr\"".into(),
                        "write e.g. `lifetime = \"10 yr\"`",
                    )),
                },
                "deny" => match value.as_array() {
                    Some(items) if items.iter().all(|i| i.as_str() == Some("warnings")) => {
                        config.deny_warnings = !items.is_empty();
                    }
                    _ => diags.push(bad(
                        key,
                        "`deny` takes a list holding \"warnings\"".into(),
                        "write `deny = [\"warnings\"]`",
                    )),
                },
                "evidence" => match value.as_array().map(|a| {
                    a.iter()
                        .map(|v| v.as_str().map(str::to_string))
                        .collect::<Option<Vec<_>>>()
                }) {
                    Some(Some(paths)) => config.evidence_paths = paths,
                    _ => diags.push(bad(
                        key,
                        "`evidence` takes a list of results files".into(),
                        "write e.g. `evidence = [\"results/bench.json\"]`",
                    )),
                },
                "limits" => match value.as_table() {
                    Some(table) => {
                        let (limits, problems) = parse_limits(table);
                        config.limits = limits;
                        for (k, msg, help) in problems {
                            diags.push(bad(&k, msg, &help));
                        }
                    }
                    None => diags.push(bad(
                        key,
                        "`limits` must be a table".into(),
                        "write `[limits]` and then e.g. `max_file_size = \"16 MiB\"`",
                    )),
                },
                "rules" => match value.as_table() {
                    Some(rules) => {
                        for (rule, sev) in rules {
                            if !guardband_rules::registry().iter().any(|r| r.name == rule) {
                                let names: Vec<&str> =
                                    guardband_rules::registry().iter().map(|r| r.name).collect();
                                let help = did_you_mean(rule, names.iter().copied())
                                    .map(|s| format!("did you mean `{s}`?"))
                                    .unwrap_or_else(|| {
                                        "`guardband explain --list` shows every rule".into()
                                    });
                                diags.push(bad(rule, format!("unknown rule `{rule}`"), &help));
                                continue;
                            }
                            let level = match sev.as_str() {
                                Some("error") => Some(Some(Severity::Error)),
                                Some("warning") => Some(Some(Severity::Warning)),
                                Some("info") => Some(Some(Severity::Info)),
                                Some("off") => Some(None),
                                _ => None,
                            };
                            match level {
                                Some(l) => {
                                    config.options.severities.insert(rule.clone(), l);
                                }
                                None => diags.push(bad(
                                    rule,
                                    format!("bad severity for `{rule}`"),
                                    "use \"error\", \"warning\", \"info\" or \"off\"",
                                )),
                            }
                        }
                    }
                    None => diags.push(bad(
                        key,
                        "`rules` must be a table".into(),
                        "write `[rules]` and then `rule-name = \"warning\"`",
                    )),
                },
                other => {
                    let help = did_you_mean(other, known.iter().copied())
                        .map(|s| format!("did you mean `{s}`?"))
                        .unwrap_or_else(|| format!("known keys: {}", known.join(", ")));
                    diags.push(bad(
                        other,
                        format!("unknown key `{other}` in guardband.toml"),
                        &help,
                    ));
                }
            }
        }
        (config, diags)
    }
}
