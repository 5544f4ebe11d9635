//! What a spec shows, taken from the sets: each series resolved to a curve
//! (values, dB level against its reference, units, line spectra as stems),
//! numeric lines that take x from a set, and bars from a set (energetic sums
//! per input) or from a run report's path ranking.
//!
//! Not here: axes and pixels (`layout.rs`), drawing (`draw.rs`, `render.rs`).

use super::band::CurveBand;
use super::layout::tick_text;
use super::spec::{BarGroup, PlotSpec};
use crate::error::{Error, Result};
use crate::frf::{FrfSet, SignalKind};
use crate::units::Quantity;
use num_complex::Complex64;
use std::collections::BTreeMap;

/// dB reference of a plotted spectrum quantity: the ISO 1683 values from
/// [`crate::levels::reference`] (an SI unit, marked as such, where the
/// standard gives none). FRFs are plotted in dB re 1 SI unit of the ratio
/// (common practice; ISO 1683 defines no FRF references).
pub fn db_reference(q: Quantity, rotational: bool) -> (f64, String) {
    let r = crate::levels::reference(q, rotational);
    let text = if r.standardised {
        r.text
    } else {
        format!("{}, no standard reference", r.text)
    };
    (r.value, text)
}

/// A resolved curve.
#[derive(Debug, Clone)]
pub(super) struct Curve {
    pub(super) label: String,
    pub(super) freqs: Vec<f64>,
    pub(super) values: Vec<Complex64>,
    /// dB level of each value and the axis text of the reference.
    pub(super) level: Vec<f64>,
    pub(super) db_label: String,
    pub(super) unit: String,
    /// A line spectrum with empty lines (harmonics): drawn as stems.
    pub(super) stems: bool,
    /// The phase drawn (degrees, ±180°; NaN at an empty line of a line
    /// spectrum, which has none), taken once, not at every redraw.
    pub(super) phase: Vec<f64>,
    /// The 95 % level band and reliability, when the set has an uncertainty.
    pub(super) band: Option<CurveBand>,
}

/// The phase a curve draws: [`wrap_phase`] of each value, NaN at the empty
/// lines of a line spectrum.
pub(super) fn drawn_phase(values: &[Complex64], stems: bool) -> Vec<f64> {
    values
        .iter()
        .map(|v| {
            if stems && v.norm() == 0.0 {
                f64::NAN
            } else {
                wrap_phase(*v)
            }
        })
        .collect()
}

fn ratio_unit(set: &FrfSet, i: usize, j: usize) -> String {
    let ro = set.outputs.get(i).is_some_and(|d| d.dir.is_rotational());
    let ri = set.inputs.get(j).is_some_and(|d| d.dir.is_rotational());
    let o = set.out_qty.si_unit(ro);
    if set.signal.is_some() || set.in_qty == Quantity::Dimensionless {
        return o.to_string();
    }
    format!("({o})/({})", set.in_qty.si_unit(ri))
}

/// The curves a spec of any frequency kind shows: its series, or for the
/// difference view each series' level minus its baseline's.
pub(super) fn curves(
    spec: &PlotSpec,
    sets: &BTreeMap<String, FrfSet>,
    bands: &Bands,
) -> Result<Vec<Curve>> {
    if spec.kind == super::spec::PlotKind::Difference {
        difference(spec, sets)
    } else {
        resolve(spec, sets, bands)
    }
}

/// The uncertainties of the sets that have one, by set id (the workspace's
/// results of a run with uncertain components).
pub type Bands = BTreeMap<String, crate::recipe::Assessed>;

/// The band of entry (i, j) of `set` from its uncertainty, or `None` when
/// the uncertainty does not fit the set (then no band is drawn rather than
/// a wrong one).
fn band_of(
    set: &FrfSet,
    a: &crate::recipe::Assessed,
    i: usize,
    j: usize,
    level: &[f64],
) -> Option<CurveBand> {
    let n = set.data.len();
    if a.uncertainty.std.len() != n || a.reliability.flags.len() != n {
        return None;
    }
    let mut lo = Vec::with_capacity(set.n_lines());
    let mut hi = Vec::with_capacity(set.n_lines());
    let mut reliable = Vec::with_capacity(set.n_lines());
    for (k, l) in level.iter().enumerate() {
        let x = set.idx(k, i, j);
        let (a_lo, a_hi) = crate::uncertainty::level_interval_db(
            set.data[x],
            a.uncertainty.std[x],
            set.signal,
            *l,
        );
        lo.push(a_lo);
        hi.push(a_hi);
        reliable.push(a.reliability.flags[x] == 0);
    }
    Some(CurveBand { lo, hi, reliable })
}

/// Each series' level minus its baseline's, line by line, in dB: both on
/// one grid and in one dB reference (so the difference is a ratio of the
/// same quantity), else refused naming both. The values kept are the
/// complex ratio (series / baseline) so the read-out can give it too.
fn difference(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>) -> Result<Vec<Curve>> {
    if spec.baseline.len() != spec.series.len() {
        return Err(Error::usage(format!(
            "the difference view compares each curve with one baseline curve: {} curve(s), {} baseline(s)",
            spec.series.len(),
            spec.baseline.len()
        ))
        .field("baseline"));
    }
    let plain = |series: &[super::spec::SeriesRef]| {
        let mut s = spec.clone();
        s.kind = super::spec::PlotKind::Magnitude;
        s.series = series.to_vec();
        s.baseline.clear();
        resolve(&s, sets, &Bands::new())
    };
    let after = plain(&spec.series)?;
    let before = plain(&spec.baseline)?;
    let mut out = Vec::new();
    for (a, b) in after.into_iter().zip(before) {
        if a.freqs != b.freqs {
            return Err(Error::usage(format!(
                "'{}' and its baseline '{}' are on different frequency grids ({} and {} lines); a level difference needs one grid",
                a.label,
                b.label,
                a.freqs.len(),
                b.freqs.len()
            ))
            .field("baseline"));
        }
        if a.db_label != b.db_label {
            return Err(Error::usage(format!(
                "'{}' is in {} and its baseline '{}' in {}: a level difference needs one quantity and reference",
                a.label, a.db_label, b.label, b.db_label
            ))
            .field("baseline"));
        }
        let level = a.level.iter().zip(&b.level).map(|(x, y)| x - y).collect();
        let values: Vec<Complex64> = a.values.iter().zip(&b.values).map(|(x, y)| x / y).collect();
        let stems = a.stems || b.stems;
        out.push(Curve {
            label: format!("{} − {}", a.label, b.label),
            freqs: a.freqs,
            phase: drawn_phase(&values, stems),
            values,
            level,
            db_label: "dB, change against the baseline".to_string(),
            unit: "ratio".to_string(),
            stems,
            band: None,
        });
    }
    Ok(out)
}

pub(super) fn resolve(
    spec: &PlotSpec,
    sets: &BTreeMap<String, FrfSet>,
    bands: &Bands,
) -> Result<Vec<Curve>> {
    let mut out = Vec::new();
    for s in &spec.series {
        let set = sets.get(&s.set).ok_or_else(|| {
            Error::missing(format!("no data set '{}' is loaded", s.set)).field("plot series")
        })?;
        if s.out >= set.n_out() || s.inp >= set.n_in() {
            return Err(Error::usage(format!(
                "entry ({}, {}) is outside set '{}' of {}×{}",
                s.out,
                s.inp,
                s.set,
                set.n_out(),
                set.n_in()
            ))
            .field("plot series"));
        }
        let values = set.column(s.out, s.inp);
        let ro = set.outputs[s.out].dir.is_rotational();
        let (level, db_label) = match set.signal {
            Some(kind) => {
                let (r, name) = db_reference(set.out_qty, ro);
                let lv: Vec<f64> = values
                    .iter()
                    .map(|v| match kind {
                        // Peak amplitude to RMS for the level.
                        SignalKind::Peak => 20.0 * (v.norm() / 2f64.sqrt() / r).log10(),
                        SignalKind::Rms => 20.0 * (v.norm() / r).log10(),
                        // Mean-square quantities: 10 log10(P / ref²).
                        SignalKind::Autopower | SignalKind::Psd | SignalKind::Esd => {
                            10.0 * (v.re.abs() / (r * r)).log10()
                        }
                        // |cross spectrum| in (output unit)·(reference unit)
                        SignalKind::Cross => 10.0 * (v.norm() / (r * r)).log10(),
                    })
                    .collect();
                let per_hz = match kind {
                    SignalKind::Psd => "²/Hz",
                    SignalKind::Esd => "²·s/Hz",
                    _ => "",
                };
                (lv, format!("dB re ({name}){per_hz}"))
            }
            None => {
                let lv = values.iter().map(|v| 20.0 * v.norm().log10()).collect();
                (lv, format!("dB re 1 {}", ratio_unit(set, s.out, s.inp)))
            }
        };
        let label = s.label.clone().unwrap_or_else(|| {
            format!(
                "{}: {} / {}",
                set.name, set.outputs[s.out], set.inputs[s.inp]
            )
        });
        let stems = set.signal.is_some() && values.iter().any(|v| v.norm() == 0.0);
        let band = bands
            .get(&s.set)
            .and_then(|a| band_of(set, a, s.out, s.inp, &level));
        out.push(Curve {
            band,
            stems,
            label,
            freqs: set.freqs.clone(),
            phase: drawn_phase(&values, stems),
            values,
            level,
            db_label,
            unit: ratio_unit(set, s.out, s.inp),
        });
    }
    Ok(out)
}

pub(super) fn wrap_phase(v: Complex64) -> f64 {
    v.arg().to_degrees()
}

pub(super) fn lines_with_x(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>) -> Result<PlotSpec> {
    let mut spec = spec.clone();
    for l in &mut spec.lines {
        if let Some(id) = &l.x_from {
            let set = sets.get(id).ok_or_else(|| {
                Error::missing(format!("no data set '{id}' is loaded")).field("lines x_from")
            })?;
            l.x = set.freqs.clone();
        }
    }
    Ok(spec)
}

/// Band level of each input column of one output: 10·log10(Σ|v|²/ref²) over
/// the lines inside the x range (energetic sum of lines, common practice).
/// Bars from a report's `TargetRanking` (see `crate::predict::paths`), read
/// from JSON where null stands for a level without value.
fn bars_from_ranking(spec: &PlotSpec, t: &serde_json::Value) -> Result<PlotSpec> {
    let num = |v: &serde_json::Value| v.as_f64().unwrap_or(f64::NAN);
    let text = |v: &serde_json::Value| v.as_str().unwrap_or("?").to_string();
    let bad = || {
        Error::usage("path ranking: expected a target ranking from a run report")
            .field("path_ranking")
    };
    let bands = t["bands"].as_array().ok_or_else(bad)?;
    let mut names: Vec<String> = Vec::new();
    for list in std::iter::once(&t["overall"]).chain(bands.iter().map(|b| &b["paths"])) {
        for p in list.as_array().into_iter().flatten() {
            let n = text(&p["path"]);
            if !names.contains(&n) {
                names.push(n);
            }
        }
    }
    let shown: Vec<&serde_json::Value> = bands
        .iter()
        .filter(|b| {
            let any = b["paths"]
                .as_array()
                .is_some_and(|ps| ps.iter().any(|p| num(&p["level_db"]).is_finite()));
            let (lo, hi) = (num(&b["band"]["lower"]), num(&b["band"]["upper"]));
            any && spec.x_range.map_or(true, |[a, z]| hi >= a && lo <= z)
        })
        .collect();
    let mut out = spec.clone();
    out.categories = shown.iter().map(|b| text(&b["band"]["label"])).collect();
    out.groups = names
        .iter()
        .map(|n| BarGroup {
            label: n.clone(),
            values: shown
                .iter()
                .map(|b| {
                    b["paths"]
                        .as_array()
                        .into_iter()
                        .flatten()
                        .find(|p| p["path"].as_str() == Some(n))
                        .map_or(f64::NAN, |p| num(&p["level_db"]))
                })
                .collect(),
        })
        .collect();
    let (w, w_short) = match t["weighting"].as_str() {
        Some("a") => (", A-weighted", "(A)"),
        Some("c") => (", C-weighted", "(C)"),
        _ => ("", ""),
    };
    if out.y_label.is_empty() {
        out.y_label = format!("path contribution ({}{w})", text(&t["unit"]));
    }
    if out.x_label.is_empty() {
        out.x_label = "one-third-octave band (Hz)".into();
    }
    if out.title.is_empty() {
        out.title = format!(
            "paths at {}: total {:.1} dB{w_short}, energetic sum of paths {:.1} dB{w_short}",
            text(&t["target"]),
            num(&t["total_db"]),
            num(&t["sum_of_paths_db"])
        );
    }
    Ok(out)
}

pub(super) fn bars_from_set(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>) -> Result<PlotSpec> {
    if let Some(t) = &spec.path_ranking {
        return bars_from_ranking(spec, t);
    }
    let Some(r) = &spec.ranking else {
        return Ok(spec.clone());
    };
    let set = sets.get(&r.set).ok_or_else(|| {
        Error::missing(format!("no data set '{}' is loaded", r.set)).field("ranking")
    })?;
    if r.out >= set.n_out() {
        return Err(Error::usage(format!(
            "output {} is outside set '{}' with {} outputs",
            r.out,
            r.set,
            set.n_out()
        ))
        .field("ranking"));
    }
    let (lo, hi) = match spec.x_range {
        Some([a, b]) => (a, b),
        None => (f64::NEG_INFINITY, f64::INFINITY),
    };
    let ro = set.outputs[r.out].dir.is_rotational();
    let (reference, ref_text) = match set.signal {
        Some(_) => {
            let (v, t) = db_reference(set.out_qty, ro);
            (v, format!("dB re {t}"))
        }
        None => (1.0, format!("dB re 1 {}", ratio_unit(set, r.out, 0))),
    };
    let mut values = Vec::new();
    for j in 0..set.n_in() {
        let col = set.column(r.out, j);
        // Mean square per line: spectra as crate::levels defines it (peak |X|²/2,
        // RMS |X|², autopower, PSD × line width); FRFs |H|².
        let ms: Vec<f64> = match set.signal {
            Some(kind) => crate::levels::mean_squares(&col, &set.freqs, kind)?,
            None => col.iter().map(|v| v.norm_sqr()).collect(),
        };
        let e: f64 = set
            .freqs
            .iter()
            .zip(&ms)
            .filter(|(f, m)| **f >= lo && **f <= hi && m.is_finite())
            .map(|(_, m)| *m)
            .sum();
        values.push(10.0 * (e / (reference * reference)).log10());
    }
    let mut out = spec.clone();
    out.categories = set.inputs.iter().map(|d| d.to_string()).collect();
    out.groups = vec![BarGroup {
        label: format!("{} at {}", set.name, set.outputs[r.out]),
        values,
    }];
    if out.y_label.is_empty() {
        out.y_label = format!("band level ({ref_text})");
    }
    if out.x_label.is_empty() {
        out.x_label = match spec.x_range {
            Some([a, b]) => format!(
                "inputs (paths), lines from {} to {} Hz",
                tick_text(a),
                tick_text(b)
            ),
            None => "inputs (paths), all lines".into(),
        };
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::sdof;
    use super::super::render_svg;
    use super::*;

    #[test]
    fn ranking_bars_are_energetic_sums() {
        // One line of |H| = 1e-4 m/N inside the range → 20·log10(1e-4) = −80 dB re 1 m/N.
        let mut spec = PlotSpec::from_json(
            r#"{"kind":"bars","ranking":{"set":"a","out":0,"in":0},"x_range":[0.5,0.5]}"#,
        )
        .unwrap();
        let b = bars_from_set(&spec, &sdof()).unwrap();
        let v = b.groups[0].values[0];
        let h = sdof()["a"].get(0, 0, 0).norm();
        assert!((v - 20.0 * h.log10()).abs() < 1e-12);
        // Two lines: 10·log10(|H1|² + |H2|²).
        spec.x_range = Some([0.5, 1.0]);
        let b = bars_from_set(&spec, &sdof()).unwrap();
        let s = sdof();
        let e = s["a"].get(0, 0, 0).norm_sqr() + s["a"].get(1, 0, 0).norm_sqr();
        assert!((b.groups[0].values[0] - 10.0 * e.log10()).abs() < 1e-12);
        render_svg(&spec, &sdof()).unwrap();
    }

    #[test]
    fn report_ranking_becomes_band_bars() {
        // Shape of predict::paths::TargetRanking as a report writes it (−∞ as null).
        let t = serde_json::json!({
            "target": "room:bed", "unit": "dB re 20 µPa", "weighting": "a",
            "total_db": 30.0, "sum_of_paths_db": 31.0,
            "overall": [{"path": "p1", "level_db": 29.0, "share": 0.6, "rank": 1},
                        {"path": "p2", "level_db": 27.0, "share": 0.4, "rank": 2}],
            "bands": [
                {"band": {"label": "63", "lower": 56.2, "upper": 70.8}, "total_db": 20.0,
                 "paths": [{"path": "p2", "level_db": 19.0}, {"path": "p1", "level_db": 12.0}]},
                {"band": {"label": "80", "lower": 70.8, "upper": 89.1}, "total_db": null,
                 "paths": [{"path": "p1", "level_db": null}, {"path": "p2", "level_db": null}]}
            ]
        });
        let spec = PlotSpec {
            path_ranking: Some(t),
            ..PlotSpec::from_json(r#"{"kind":"bars"}"#).unwrap()
        };
        let b = bars_from_set(&spec, &BTreeMap::new()).unwrap();
        assert_eq!(b.categories, vec!["63"]);
        assert_eq!(b.groups[0].label, "p1");
        assert_eq!(b.groups[0].values, vec![12.0]);
        assert_eq!(b.groups[1].values, vec![19.0]);
        assert!(b.y_label.contains("A-weighted"));
        render_svg(&spec, &BTreeMap::new()).unwrap();
    }
}
