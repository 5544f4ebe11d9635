//! Time data as delimited text: a time column, then one column per channel.
//!
//! ```text
//! # lines starting with '#' are comments
//! time [s], rig:1+Z [N], rig:2+Z [m/s^2]
//! 0, 0.12, -0.03
//! 0.0005, 0.11, 0.02
//! ```
//! The delimiter is the first of `,` `;` tab found in the header line; the
//! decimal mark is a point. The first column's name starts with `time` (or
//! is `t`) and its unit is `s` or `ms`; every other column is `DOF [UNIT]`
//! with the unit deciding the quantity (N force, m/s² acceleration, Pa
//! pressure, ...), converted to SI. Times must increase with an even step
//! (within 10⁻⁶ of the mean step): the sample rate is (n − 1) / (last −
//! first). Every error names its line and column.

use crate::error::{quote, Error, Result};
use crate::frf::Dof;
use crate::signal::{Channel, Recording};
use crate::units::{parse_unit, Quantity};

fn header_line(text: &str) -> Option<(usize, &str)> {
    super::csv::text_lines(text)
        .enumerate()
        .map(|(n, l)| (n + 1, l))
        .find(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'))
}

fn split_name(cell: &str) -> (&str, Option<&str>) {
    let c = cell.trim();
    match (c.rfind('['), c.ends_with(']')) {
        (Some(p), true) => (c[..p].trim(), Some(c[p + 1..c.len() - 1].trim())),
        _ => (c, None),
    }
}

/// The sample rate of increasing `times` (s) with an even step (each within
/// 10⁻⁶ of the mean step), or the error naming the rows; shared with the
/// supplier time CSV read through a map ([`crate::io::csv::read_time_mapped`]).
pub fn even_rate(times: &[f64]) -> Result<f64> {
    if times.len() < 2 {
        return Err(Error::parse(format!(
            "{} row(s) of data; expected at least 2",
            times.len()
        )));
    }
    let m = times.len();
    let step = (times[m - 1] - times[0]) / (m - 1) as f64;
    for k in 1..m {
        let d = times[k] - times[k - 1];
        if (d - step).abs() > 1e-6 * step {
            return Err(Error::unsupported(format!(
                "uneven time step: {d} s between rows {} and {} of data, the mean step is {step} s; spectra need an even sample rate",
                k,
                k + 1
            ))
            .field("column 1"));
        }
    }
    Ok(1.0 / step)
}

/// True when the first line that is not a comment starts with a time column.
pub fn looks_like_time_csv(bytes: &[u8]) -> bool {
    let head = &bytes[..bytes.len().min(4096)];
    let text = super::csv::decode_text(head);
    let Some((_, line)) = header_line(&text) else {
        return false;
    };
    let Some(d) = [',', ';', '\t'].into_iter().find(|d| line.contains(*d)) else {
        return false;
    };
    let first = line.split(d).next().unwrap_or("");
    let (name, _) = split_name(first);
    let n = name.to_ascii_lowercase();
    n.starts_with("time") || n == "t"
}

/// Read the file into a recording; `component` names DOFs without one.
pub fn read(bytes: &[u8], file: &str, component: &str) -> Result<Recording> {
    let text = super::csv::decode_text(bytes);
    let err = |line: usize, field: String, msg: String| {
        Error::parse(msg).in_file(file).at_line(line).field(field)
    };
    let Some((hline, header)) = header_line(&text) else {
        return Err(Error::parse("no header line (time [s], DOF [UNIT], ...)").in_file(file));
    };
    let Some(delim) = [',', ';', '\t'].into_iter().find(|d| header.contains(*d)) else {
        return Err(err(
            hline,
            "header".into(),
            "no delimiter (',', ';' or tab) in the header line; expected time [s] then one column per channel".into(),
        ));
    };
    let cells: Vec<&str> = header.split(delim).collect();
    let (tname, tunit) = split_name(cells[0]);
    let tl = tname.to_ascii_lowercase();
    if !(tl.starts_with("time") || tl == "t") {
        return Err(err(
            hline,
            "column 1".into(),
            format!(
                "the first column is '{}'; expected the time column, e.g. 'time [s]'",
                quote(tname)
            ),
        ));
    }
    let tfactor = match tunit.map(|u| u.to_ascii_lowercase()) {
        Some(u) if u == "s" => 1.0,
        Some(u) if u == "ms" => 1e-3,
        other => {
            return Err(err(
                hline,
                "column 1".into(),
                format!(
                    "time unit {}; expected [s] or [ms]",
                    other.map_or("missing".to_string(), |u| format!("'{}'", quote(&u)))
                ),
            ))
        }
    };
    if cells.len() < 2 {
        return Err(err(
            hline,
            "header".into(),
            "no channel column after the time column".into(),
        ));
    }
    let mut channels = Vec::new();
    let mut factors = Vec::new();
    for (c, cell) in cells.iter().enumerate().skip(1) {
        let field = format!("column {} ('{}')", c + 1, quote(cell.trim()));
        let (name, unit) = split_name(cell);
        let Some(unit) = unit else {
            return Err(err(
                hline,
                field,
                "no unit; expected 'DOF [UNIT]', e.g. 'rig:1+Z [N]' (a supplier's time CSV is read through a time column map: 'time_map' on the page, --time-map on the command line)".into(),
            ));
        };
        let dof = Dof::parse(name, component).map_err(|e| err(hline, field.clone(), e.message))?;
        let u = parse_unit(unit).map_err(|e| err(hline, field.clone(), e.message))?;
        let Some((quantity, rot)) = Quantity::from_dim(u.dim) else {
            return Err(err(
                hline,
                field,
                format!(
                    "unit '{}' measures no quantity mortise knows (force, motion, pressure, ...)",
                    quote(unit)
                ),
            ));
        };
        if rot != dof.dir.is_rotational() {
            return Err(err(
                hline,
                field,
                format!(
                    "unit '{}' does not suit the direction of {dof}",
                    quote(unit)
                ),
            ));
        }
        if channels.iter().any(|ch: &Channel| ch.dof.same_place(&dof)) {
            return Err(err(hline, field, format!("channel {dof} appears twice")));
        }
        channels.push(Channel { dof, quantity });
        factors.push(u.factor);
    }
    let mut times = Vec::new();
    let mut samples = vec![Vec::new(); channels.len()];
    for (n, line) in super::csv::text_lines(&text)
        .enumerate()
        .map(|(n, l)| (n + 1, l))
    {
        if n <= hline || line.trim().is_empty() || line.trim_start().starts_with('#') {
            continue;
        }
        let row: Vec<&str> = line.split(delim).collect();
        if row.len() != cells.len() {
            return Err(err(
                n,
                "row".into(),
                format!("{} cells; the header has {}", row.len(), cells.len()),
            ));
        }
        for (c, cell) in row.iter().enumerate() {
            let v: f64 = match cell.trim().parse::<f64>() {
                Ok(v) if v.is_finite() => v,
                _ => {
                    return Err(err(
                        n,
                        format!("column {}", c + 1),
                        format!("'{}' is not a finite number", quote(cell.trim())),
                    ))
                }
            };
            if c == 0 {
                let t = v * tfactor;
                if let Some(&prev) = times.last() {
                    if t <= prev {
                        return Err(err(
                            n,
                            "column 1".into(),
                            format!("time {t} s does not exceed the previous row's {prev} s; expected increasing times"),
                        ));
                    }
                }
                times.push(t);
            } else {
                samples[c - 1].push(v * factors[c - 1]);
            }
        }
    }
    if times.len() < 2 {
        return Err(Error::parse(format!(
            "{} row(s) of data; expected at least 2",
            times.len()
        ))
        .in_file(file));
    }
    let fs = even_rate(&times).map_err(|e| e.in_file(file))?;
    Ok(Recording {
        fs,
        channels,
        samples,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_channels_in_si_and_refuses_bad_time() {
        let t = "# bench\ntime [ms]; r:1+Z [N]; r:2+Z [g]\n0;1;0.5\n1;2;1\n2;3;-1\n";
        assert!(looks_like_time_csv(t.as_bytes()));
        let r = read(t.as_bytes(), "t.csv", "x").unwrap();
        assert!((r.fs - 1000.0).abs() < 1e-9);
        assert_eq!(r.channels[1].quantity, Quantity::Acceleration);
        assert!((r.samples[1][0] - 0.5 * 9.80665).abs() < 1e-12);
        let e = read(b"time [s],a:1+Z [N]\n0,1\n0.2,1\n0.1,1\n", "t.csv", "").unwrap_err();
        assert!(e.message.contains("expected increasing times"), "{e}");
        assert_eq!(e.location, Some(crate::error::Location::Line(4)));
        let e = read(b"time [s],a:1+Z [N]\n0,1\n0.1,1\n0.3,1\n", "t.csv", "").unwrap_err();
        assert!(e.message.contains("uneven time step"), "{e}");
        let e = read(b"time [s],a:1+Z [furlong]\n0,1\n", "t.csv", "").unwrap_err();
        assert_eq!(e.location, Some(crate::error::Location::Line(1)));
    }
}
