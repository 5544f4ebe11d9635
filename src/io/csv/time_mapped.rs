//! A supplier's time CSV read through a column map: the text layout of the
//! FRF column map ([`ColumnMap`]'s delimiter, skipped rows, header line and
//! decimal comma, the same [`layout`] and column references by number or
//! by name), then a time column in s or ms and one column per channel, each
//! given its DOF and unit (or the unit from a units row). A column named in
//! the map and missing from the header is refused, listing the header's
//! names; a unit the units row gives that mortise does not know is refused
//! naming the column; columns the map leaves out are noted. Times must
//! increase with an even step, as in our own time CSV ([`crate::io::time_csv`]).
//!
//! ```json
//! {"delimiter": "semicolon", "skip_rows": 3, "header_line": 2, "unit_line": 3,
//!  "decimal_comma": true, "time": "Zeit", "time_unit": "ms",
//!  "channels": [{"column": "Hammer", "dof": "rig:1+Z"},
//!               {"column": "Acc 1", "dof": "rig:2+Z", "unit": "g"}]}
//! ```

use super::column_map::{ColumnMap, ColumnRef, Delimiter};
use super::mapped::{cell_num, layout, resolve, HeaderIndex};
use super::text::{decode_text, numbered_lines};
use crate::error::{quote, Error, Result};
use crate::frf::Dof;
use crate::signal::{Channel, Recording};
use crate::units::{parse_unit, Quantity};

/// One channel of a supplier's time CSV.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TimeChannelMap {
    pub column: ColumnRef,
    /// `node+Z` or `component:node+Z`.
    pub dof: String,
    /// The unit of the column's values (`N`, `g`, `mm/s`, ...); default:
    /// the units row's cell (`unit_line`).
    #[serde(default)]
    pub unit: Option<String>,
}

/// How a supplier's time CSV is read (see the module docs).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TimeColumnMap {
    #[serde(default)]
    pub delimiter: Delimiter,
    /// Lines before the first data row (titles, names, units).
    #[serde(default)]
    pub skip_rows: usize,
    /// 1-based line of the column names; default: the last skipped line.
    #[serde(default)]
    pub header_line: Option<usize>,
    /// 1-based line of the units, one cell per column (optional).
    #[serde(default)]
    pub unit_line: Option<usize>,
    #[serde(default)]
    pub decimal_comma: bool,
    pub time: ColumnRef,
    /// "s" or "ms"; default: the units row's cell for the time column.
    #[serde(default)]
    pub time_unit: Option<String>,
    pub channels: Vec<TimeChannelMap>,
}

impl TimeColumnMap {
    /// A map from its JSON form; unknown keys are refused, naming them.
    pub fn from_json(v: serde_json::Value) -> Result<TimeColumnMap> {
        serde_json::from_value(v)
            .map_err(|e| Error::usage(crate::io::json_message(&e)).field("time_map"))
    }
}

/// Read `bytes` through `map` into a recording (`component` names DOFs
/// without one), with notes on the columns left out.
pub fn read_time_mapped(
    bytes: &[u8],
    file: &str,
    map: &TimeColumnMap,
    component: &str,
) -> Result<(Recording, Vec<String>)> {
    let r = read_inner(bytes, map, component).map_err(|e| e.in_file(file))?;
    Ok(r)
}

fn read_inner(
    bytes: &[u8],
    map: &TimeColumnMap,
    component: &str,
) -> Result<(Recording, Vec<String>)> {
    if map.channels.is_empty() {
        return Err(Error::usage("the time map names no channel").field("channels"));
    }
    let text = decode_text(bytes);
    let lines = numbered_lines(&text);
    // the FRF map's layout: delimiter, skipped rows, header line, decimal comma
    let frame = ColumnMap {
        delimiter: map.delimiter,
        skip_rows: map.skip_rows,
        header_line: map.header_line,
        decimal_comma: map.decimal_comma,
        ..ColumnMap::default()
    };
    let lay = layout(&lines, &frame)?;
    let index = HeaderIndex::new(&lay.header);
    let units: Vec<String> = match map.unit_line {
        Some(n) if n >= 1 && n <= lines.len() => lay
            .delim
            .split(lines[n - 1].1)
            .into_iter()
            .map(|c| {
                let c = c.trim();
                // "[N]" or "(N)" as well as "N"
                c.trim_start_matches(['[', '('])
                    .trim_end_matches([']', ')'])
                    .trim()
                    .to_string()
            })
            .collect(),
        Some(n) => {
            return Err(Error::parse(format!(
                "units line {n} does not exist; the file has {} lines",
                lines.len()
            ))
            .field("unit_line"))
        }
        None => Vec::new(),
    };
    let unit_of = |c: usize, given: &Option<String>, role: &str| -> Result<String> {
        if let Some(u) = given {
            return Ok(u.trim().to_string());
        }
        units
            .get(c)
            .filter(|u| !u.is_empty())
            .cloned()
            .ok_or_else(|| {
                Error::usage(format!(
                    "no unit for column {}: give 'unit' in the map or a units row ('unit_line')",
                    c + 1
                ))
                .field(role.to_string())
            })
    };
    let tc = resolve(&map.time, &index, "time")?;
    let tunit = unit_of(tc, &map.time_unit, "time_unit")?;
    let tfactor = match tunit.to_ascii_lowercase().as_str() {
        "s" => 1.0,
        "ms" => 1e-3,
        _ => {
            return Err(Error::usage(format!(
                "time unit '{}' ({}); expected s or ms",
                quote(&tunit),
                map.time
            ))
            .field("time_unit"))
        }
    };
    let mut channels: Vec<Channel> = Vec::new();
    let mut cols = Vec::new();
    let mut factors = Vec::new();
    for (k, ch) in map.channels.iter().enumerate() {
        let role = format!("channels[{k}]");
        let c = resolve(&ch.column, &index, &role)?;
        if c == tc || cols.contains(&c) {
            return Err(Error::usage(format!("{} is mapped twice", ch.column)).field(role));
        }
        let dof = Dof::parse(&ch.dof, component)
            .map_err(|e| Error::usage(e.message).field(format!("{role}.dof")))?;
        let unit = unit_of(c, &ch.unit, &format!("{role}.unit"))?;
        let u = parse_unit(&unit).map_err(|e| {
            Error::usage(format!(
                "{} unit '{}': {}",
                ch.column,
                quote(&unit),
                e.message
            ))
            .field(format!("{role}.unit"))
        })?;
        let Some((quantity, rot)) = Quantity::from_dim(u.dim) else {
            return Err(Error::usage(format!(
                "{} unit '{}' measures no quantity mortise knows (force, motion, pressure, ...)",
                ch.column,
                quote(&unit)
            ))
            .field(format!("{role}.unit")));
        };
        if rot != dof.dir.is_rotational() {
            return Err(Error::usage(format!(
                "{} unit '{}' does not suit the direction of {dof}",
                ch.column,
                quote(&unit)
            ))
            .field(format!("{role}.unit")));
        }
        if channels.iter().any(|x| x.dof.same_place(&dof)) {
            return Err(Error::usage(format!("channel {dof} is mapped twice")).field(role));
        }
        channels.push(Channel { dof, quantity });
        cols.push(c);
        factors.push(u.factor);
    }
    let mut times = Vec::with_capacity(lay.data.len());
    let mut samples = vec![Vec::with_capacity(lay.data.len()); channels.len()];
    let mut width = None;
    for &(ln, line) in &lay.data {
        let cells = lay.delim.split(line);
        let w = *width.get_or_insert(cells.len());
        if cells.len() != w {
            return Err(
                Error::parse(format!("{} cells; the first data row has {w}", cells.len()))
                    .at_line(ln)
                    .field("row"),
            );
        }
        let t = cell_num(&cells, tc, &frame, ln, "time")? * tfactor;
        if let Some(&prev) = times.last() {
            if t <= prev {
                return Err(Error::parse(format!(
                    "time {t} s does not exceed the previous row's {prev} s; expected increasing times"
                ))
                .at_line(ln)
                .field(format!("column {} (time)", tc + 1)));
            }
        }
        times.push(t);
        for (k, &c) in cols.iter().enumerate() {
            samples[k].push(cell_num(&cells, c, &frame, ln, "a sample")? * factors[k]);
        }
    }
    let fs = crate::io::time_csv::even_rate(&times)?;
    let mut notes = Vec::new();
    let left: Vec<String> = (0..width.unwrap_or(0))
        .filter(|c| *c != tc && !cols.contains(c))
        .map(|c| match lay.header.get(c) {
            Some(h) if !h.is_empty() => format!("'{}'", quote(h)),
            _ => format!("column {}", c + 1),
        })
        .collect();
    if !left.is_empty() {
        notes.push(format!(
            "not in the time map, left out: {}",
            left.join(", ")
        ));
    }
    Ok((
        Recording {
            fs,
            channels,
            samples,
        },
        notes,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn map(v: serde_json::Value) -> TimeColumnMap {
        TimeColumnMap::from_json(v).unwrap()
    }

    #[test]
    fn a_supplier_layout_reads_through_the_map_and_names_what_it_cannot_map() {
        let text = "Bench run 4\nZeit;Hammer;Acc 1;Temp\nms;N;g;degC\n0,0;1,5;0,25;20\n0,5;2,5;0,5;20\n1,0;3,5;0,75;20\n";
        let m = map(
            serde_json::json!({"delimiter": "semicolon", "skip_rows": 3, "header_line": 2,
            "unit_line": 3, "decimal_comma": true, "time": "zeit",
            "channels": [{"column": "Hammer", "dof": "rig:1+Z"}, {"column": "Acc 1", "dof": "2+Z"}]}),
        );
        let (rec, notes) = read_time_mapped(text.as_bytes(), "s.csv", &m, "rig").unwrap();
        // 0.5 ms steps: 2000 Hz; g = 9.80665 m/s² (CGPM 1901)
        assert!((rec.fs - 2000.0).abs() < 1e-9);
        assert_eq!(rec.channels[1].dof.to_string(), "rig:2+Z");
        assert_eq!(rec.channels[1].quantity, Quantity::Acceleration);
        assert!((rec.samples[1][2] - 0.75 * 9.80665).abs() < 1e-12);
        assert_eq!(rec.samples[0], vec![1.5, 2.5, 3.5]);
        assert!(notes[0].contains("'Temp'"), "{notes:?}");
        // a name the header lacks: refused, listing the names
        let bad = map(
            serde_json::json!({"delimiter": "semicolon", "skip_rows": 3, "header_line": 2,
            "unit_line": 3, "decimal_comma": true, "time": "Zeit",
            "channels": [{"column": "Hammer 2", "dof": "rig:1+Z"}]}),
        );
        let e = read_time_mapped(text.as_bytes(), "s.csv", &bad, "").unwrap_err();
        assert_eq!(e.field.as_deref(), Some("channels[0]"));
        assert!(
            e.message.contains("'Zeit'") && e.message.contains("'Hammer 2'"),
            "{e}"
        );
        // a units row cell mortise does not know
        let bad = map(
            serde_json::json!({"delimiter": "semicolon", "skip_rows": 3, "header_line": 2,
            "unit_line": 3, "decimal_comma": true, "time": "Zeit",
            "channels": [{"column": "Temp", "dof": "rig:9+Z"}]}),
        );
        let e = read_time_mapped(text.as_bytes(), "s.csv", &bad, "").unwrap_err();
        assert_eq!(e.field.as_deref(), Some("channels[0].unit"));
        // an unknown key
        let e = TimeColumnMap::from_json(serde_json::json!({"time": 1, "channels": [], "rate": 5}))
            .unwrap_err();
        assert!(e.message.contains("rate"), "{e}");
    }
}
