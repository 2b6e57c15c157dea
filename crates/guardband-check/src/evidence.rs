//! Results files: measured evidence for the fault cases and analyses, in
//! the JSON that `guardband testbench --run` writes or in a CSV that bench
//! measurements and other simulators' exports can be written in. Both are
//! documented in REFERENCE.md ("Results files"). A record the reader cannot
//! take (a missing column, a number that does not parse, a unit that does
//! not fit the quantity) is a diagnostic at its place in the file, and the
//! record is left out: nothing is read from it.

use guardband_model::{Diagnostic, FileId};
use guardband_rules::evidence::{Measurement, quantity_kind};
use guardband_units::QuantityKind;
use serde::{Deserialize, Serialize};

/// The name in a JSON results file's `format` field.
pub const FORMAT: &str = "guardband-results";
/// The version of the JSON results format this reader takes.
pub const VERSION: u32 = 1;

/// A JSON results file as `guardband testbench --run` writes it.
#[derive(Debug, Serialize, Deserialize)]
pub struct ResultsFile<R> {
    pub format: String,
    pub version: u32,
    pub records: Vec<R>,
}

/// One record of a JSON results file: one quantity of one case at one
/// corner, with where it came from.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Record {
    pub regulator: String,
    pub case: String,
    pub corner: String,
    pub quantity: String,
    /// In `unit`.
    pub value: f64,
    pub unit: String,
    /// The deck it was measured with, relative to the results file.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub deck: Option<String>,
    /// The spec file and the content hash it had when the deck was made.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub spec: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub spec_hash: Option<String>,
    /// The netlist and its content hash.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub netlist: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub netlist_hash: Option<String>,
}

/// The measurements of one results file, each pointing into `file`, and
/// the problems of the records left out.
pub fn read(text: &str, file: FileId) -> (Vec<Measurement>, Vec<Diagnostic>) {
    let looks_json = text.trim_start().starts_with('{');
    if looks_json {
        read_json(text, file)
    } else {
        read_csv(text, file)
    }
}

fn problem(file: FileId, span: std::ops::Range<usize>, message: String) -> Diagnostic {
    Diagnostic::error("evidence", file, span, message).primary("here")
}

fn read_json(text: &str, file: FileId) -> (Vec<Measurement>, Vec<Diagnostic>) {
    let mut diags = Vec::new();
    let parsed: Result<ResultsFile<&serde_json::value::RawValue>, _> = serde_json::from_str(text);
    let parsed = match parsed {
        Ok(p) => p,
        Err(e) => {
            let at = offset_of(text, e.line(), e.column());
            diags.push(problem(
                file,
                at..at,
                format!("not a guardband results file: {e}"),
            ));
            return (Vec::new(), diags);
        }
    };
    if parsed.format != FORMAT || parsed.version != VERSION {
        diags.push(problem(
            file,
            0..text.find('\n').unwrap_or(text.len()),
            format!(
                "results format `{}` version {} is not `{FORMAT}` version {VERSION}",
                parsed.format, parsed.version
            ),
        ));
        return (Vec::new(), diags);
    }
    let mut out = Vec::new();
    for raw in parsed.records {
        let start = raw.get().as_ptr() as usize - text.as_ptr() as usize;
        let span = start..start + raw.get().len();
        match serde_json::from_str::<Record>(raw.get()) {
            Ok(r) => match measurement(&r, file, span.clone()) {
                Ok(m) => out.push(m),
                Err(msg) => diags.push(problem(file, span, msg)),
            },
            Err(e) => diags.push(problem(file, span, format!("record not read: {e}"))),
        }
    }
    (out, diags)
}

/// The byte offset of a 1-based line and column (serde_json's position).
fn offset_of(text: &str, line: usize, column: usize) -> usize {
    let mut offset = 0;
    for (i, l) in text.split_inclusive('\n').enumerate() {
        if i + 1 == line {
            return (offset + column.saturating_sub(1)).min(text.len());
        }
        offset += l.len();
    }
    text.len()
}

/// The measurement a record stands for, its value in SI.
fn measurement(
    r: &Record,
    file: FileId,
    span: std::ops::Range<usize>,
) -> Result<Measurement, String> {
    let kind = quantity_kind(guardband_model::BlockKind::Fault, &r.quantity)
        .or_else(|| quantity_kind(guardband_model::BlockKind::Analysis, &r.quantity))
        .ok_or_else(|| {
            format!(
                "unknown quantity `{}`: a fault case measures `current`, `time`, `output` or `junction`, an analysis `phase_margin`, `gain_margin` or `unity_gain`",
                r.quantity
            )
        })?;
    if !r.value.is_finite() {
        return Err(format!("the value of `{}` is not a number", r.quantity));
    }
    let value = to_si(r.value, &r.unit, kind)?;
    Ok(Measurement {
        regulator: r.regulator.clone(),
        case: r.case.clone(),
        corner: r.corner.clone(),
        quantity: r.quantity.clone(),
        value,
        unit: r.unit.clone(),
        file,
        span,
        deck: r.deck.clone(),
        spec_hash: r.spec_hash.clone(),
        netlist_hash: r.netlist_hash.clone(),
    })
}

fn to_si(value: f64, unit: &str, kind: QuantityKind) -> Result<f64, String> {
    let parsed =
        guardband_units::parse_unit(unit.trim()).map_err(|_| format!("unknown unit `{unit}`"))?;
    if parsed.kind.dim != kind.dim {
        return Err(format!("`{unit}` is not a unit of {}", kind.describe()));
    }
    // `to_si` applies a unit's offset (°C), as an absolute junction needs.
    Ok(parsed.to_si(value))
}

/// The columns of a CSV results file.
const CSV_COLUMNS: [&str; 5] = ["case", "corner", "quantity", "value", "unit"];

fn read_csv(text: &str, file: FileId) -> (Vec<Measurement>, Vec<Diagnostic>) {
    let mut diags = Vec::new();
    let mut out = Vec::new();
    let mut header: Option<Vec<String>> = None;
    let mut offset = 0;
    for line in text.split_inclusive('\n') {
        let start = offset;
        offset += line.len();
        let body = line.trim_end_matches(['\n', '\r']);
        let span = start..start + body.len();
        if body.trim().is_empty() || body.trim_start().starts_with('#') {
            continue;
        }
        let cells: Vec<String> = body.split(',').map(|c| c.trim().to_string()).collect();
        let Some(columns) = &header else {
            let known = |c: &str| CSV_COLUMNS.contains(&c) || c == "regulator";
            if let Some(bad) = cells.iter().find(|c| !known(c)) {
                diags.push(problem(
                    file,
                    span,
                    format!(
                        "unknown column `{bad}`: a results CSV has the columns `regulator` (optional), `case`, `corner`, `quantity`, `value`, `unit`"
                    ),
                ));
                return (out, diags);
            }
            if let Some(missing) = CSV_COLUMNS.iter().find(|c| !cells.iter().any(|x| x == *c)) {
                diags.push(problem(
                    file,
                    span,
                    format!("the header has no `{missing}` column"),
                ));
                return (out, diags);
            }
            header = Some(cells);
            continue;
        };
        if cells.len() != columns.len() {
            diags.push(problem(
                file,
                span,
                format!(
                    "{} cells where the header has {}",
                    cells.len(),
                    columns.len()
                ),
            ));
            continue;
        }
        let cell = |name: &str| {
            columns
                .iter()
                .position(|c| c == name)
                .map(|i| cells[i].as_str())
        };
        let case = cell("case").unwrap_or("");
        let (regulator, case) = match cell("regulator") {
            Some(r) => (r.to_string(), case.to_string()),
            None => match case.split_once('.') {
                Some((r, c)) => (r.to_string(), c.to_string()),
                None => {
                    diags.push(problem(
                        file,
                        span,
                        format!(
                            "case `{case}` names no regulator: write `REGULATOR.{case}`, or add a `regulator` column"
                        ),
                    ));
                    continue;
                }
            },
        };
        let value_text = cell("value").unwrap_or("");
        let Ok(value) = value_text.parse::<f64>() else {
            diags.push(problem(
                file,
                span,
                format!("`{value_text}` is not a number"),
            ));
            continue;
        };
        let record = Record {
            regulator,
            case,
            corner: cell("corner").unwrap_or("").to_string(),
            quantity: cell("quantity").unwrap_or("").to_string(),
            value,
            unit: cell("unit").unwrap_or("").to_string(),
            deck: None,
            spec: None,
            spec_hash: None,
            netlist: None,
            netlist_hash: None,
        };
        match measurement(&record, file, span.clone()) {
            Ok(m) => out.push(m),
            Err(msg) => diags.push(problem(file, span, msg)),
        }
    }
    if header.is_none() {
        diags.push(problem(
            file,
            0..0,
            "an empty results file: a CSV starts with its header `case,corner,quantity,value,unit`"
                .into(),
        ));
    }
    (out, diags)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_rows_are_read_in_si() {
        let text = "# bench, 2026-11-30\ncase,corner,quantity,value,unit\nsensor_rail.vout_short,low,current,158,mA\nsensor_rail.vout_startup,high,time,9.4,us\n";
        let (m, d) = read(text, FileId(0));
        assert!(d.is_empty(), "{d:?}");
        assert_eq!(m.len(), 2);
        assert_eq!(m[0].regulator, "sensor_rail");
        assert_eq!(m[0].case, "vout_short");
        // 158 mA = 0.158 A, 9.4 us = 9.4e-6 s (SI prefixes, NIST SP 811).
        assert!((m[0].value - 0.158).abs() < 1e-12);
        assert!((m[1].value - 9.4e-6).abs() < 1e-15);
        assert_eq!(
            &text[m[0].span.clone()],
            "sensor_rail.vout_short,low,current,158,mA"
        );
    }

    #[test]
    fn a_bad_row_is_a_problem_at_its_line_and_is_left_out() {
        let text = "regulator,case,corner,quantity,value,unit\nr,c,low,current,abc,mA\nr,c,low,current,1,V\nr,c,low,current,1,mA\n";
        let (m, d) = read(text, FileId(0));
        assert_eq!(m.len(), 1);
        assert_eq!(d.len(), 2);
        assert!(
            d[0].message.contains("`abc` is not a number"),
            "{}",
            d[0].message
        );
        assert!(
            d[1].message.contains("`V` is not a unit of"),
            "{}",
            d[1].message
        );
        assert_eq!(&text[d[1].span.clone()], "r,c,low,current,1,V");
    }

    #[test]
    fn json_records_point_at_their_text() {
        let text = r#"{"format": "guardband-results", "version": 1, "records": [
{"regulator": "r", "case": "c", "corner": "weak", "quantity": "phase_margin", "value": 52.5, "unit": "deg"},
{"regulator": "r", "case": "c", "corner": "weak", "quantity": "speed", "value": 1, "unit": "m"}
]}"#;
        let (m, d) = read(text, FileId(0));
        assert_eq!(m.len(), 1);
        // 52.5° = 52.5 × π/180 rad (NIST SP 811).
        assert!((m[0].value - 52.5 * std::f64::consts::PI / 180.0).abs() < 1e-12);
        assert!(text[m[0].span.clone()].starts_with("{\"regulator\""));
        assert!(d[0].message.contains("unknown quantity `speed`"));
    }

    #[test]
    fn broken_json_is_one_problem_at_its_place() {
        let (m, d) = read(
            "{\"format\": \"guardband-results\",\n \"version\": ]",
            FileId(0),
        );
        assert!(m.is_empty());
        assert_eq!(d.len(), 1);
        assert!(d[0].span.start > 30, "{:?}", d[0].span);
    }
}
