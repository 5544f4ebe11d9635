//! A plot resolved from the sets ([`PlotData`]): everything a drawing needs
//! and nothing more, so it can be drawn again (zoomed, panned, switched
//! between dB and linear or log and linear frequency) without the sets. The
//! page's worker resolves a [`PlotSpec`] against its workspace and sends the
//! result to the page's main thread in parts ([`PlotMeta`] plus one array of
//! numbers per grid and four per curve), where the same drawing code draws
//! it on a canvas. [`View`] is what may change between such redraws.
//!
//! Not here: taking curves from sets (`data.rs`), drawing (`render.rs`).

use super::band::CurveBand;
use super::data::{bars_from_set, curves, drawn_phase, lines_with_x, Bands, Curve};
use super::spec::{PlotKind, PlotSpec};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use num_complex::Complex64;
use std::collections::BTreeMap;

/// A plot resolved from the sets: the spec with its lines and bars filled
/// in, and for the frequency kinds the curves (values, levels, units).
#[derive(Debug, Clone)]
pub struct PlotData {
    pub(super) spec: PlotSpec,
    pub(super) curves: Vec<Curve>,
}

/// What a redraw of [`PlotData`] may change: the switches and the zoom.
/// The size comes from the backend.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct View {
    #[serde(default = "yes")]
    pub db: bool,
    #[serde(default = "yes")]
    pub x_log: bool,
    #[serde(default)]
    pub y_log: bool,
    #[serde(default)]
    pub x_range: Option<[f64; 2]>,
    #[serde(default)]
    pub y_range: Option<[f64; 2]>,
}

fn yes() -> bool {
    true
}

impl View {
    /// The view a spec asks for.
    pub fn of(spec: &PlotSpec) -> View {
        View {
            db: spec.db,
            x_log: spec.x_log,
            y_log: spec.y_log,
            x_range: spec.x_range,
            y_range: spec.y_range,
        }
    }
}

/// One curve's description without its numbers.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CurveMeta {
    pub label: String,
    pub db_label: String,
    pub unit: String,
    pub stems: bool,
    /// Index of its frequency grid among the grids sent.
    pub grid: usize,
    /// Whether three more arrays follow its three: the lower and upper
    /// ends of its 95 % level band (dB) and 1/0 per line for reliable.
    #[serde(default)]
    pub band: bool,
}

/// [`PlotData`] without its numbers: the resolved spec (without the report
/// text a path ranking was resolved from) and each curve's description.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlotMeta {
    pub spec: PlotSpec,
    pub curves: Vec<CurveMeta>,
}

/// [`PlotData`] in parts for crossing to another wasm instance: the
/// description, the distinct frequency grids, and per curve its real parts,
/// imaginary parts and levels (dB), in that order, then for a curve with a
/// band its lower and upper ends and reliability (see [`CurveMeta::band`]).
#[derive(Debug, Clone, PartialEq)]
pub struct PlotParts {
    pub meta: PlotMeta,
    pub grids: Vec<Vec<f64>>,
    pub arrays: Vec<Vec<f64>>,
}

/// A speed map's spec: the cells of its sweep, the axis and scale titles,
/// the worst speed; the sweep's JSON itself is not kept.
fn speed_map(spec: &PlotSpec) -> Result<PlotSpec> {
    let sweep = spec.sweep.as_ref().ok_or_else(|| {
        Error::missing("a speed map needs a speed sweep from a run report").field("sweep")
    })?;
    let (cells, label, unit) = super::map::cells_from_sweep(sweep, spec.map_column)?;
    let mut s = spec.clone();
    s.worst_speed = sweep["rows"].as_array().and_then(|rows| {
        rows.iter()
            .filter_map(|r| {
                let speed = r["value"].as_str()?.parse::<f64>().ok()?;
                let level = r["levels_db"].get(spec.map_column)?.as_f64()?;
                Some((speed, level))
            })
            .max_by(|a, b| a.1.total_cmp(&b.1))
            .map(|(speed, _)| speed)
    });
    s.cells = cells;
    s.sweep = None;
    s.z_label = format!("line level ({unit})");
    if s.y_label.is_empty() {
        s.y_label = "speed (rev/s)".into();
    }
    if s.title.is_empty() {
        s.title = format!("{label}: level of each order's line against speed");
    }
    Ok(s)
}

impl PlotData {
    /// Resolve `spec` against the sets: its curves (for the difference view
    /// each series' level minus its baseline's), its lines with x from a set,
    /// its bars.
    pub fn resolve(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>) -> Result<PlotData> {
        Self::resolve_with_bands(spec, sets, &Bands::new())
    }

    /// [`PlotData::resolve`], each curve of a set with an uncertainty in
    /// `bands` carrying its 95 % level band and reliability.
    pub fn resolve_with_bands(
        spec: &PlotSpec,
        sets: &BTreeMap<String, FrfSet>,
        bands: &Bands,
    ) -> Result<PlotData> {
        let (spec, curves) = match spec.kind {
            PlotKind::Lines => (lines_with_x(spec, sets)?, Vec::new()),
            PlotKind::SpeedMap => (speed_map(spec)?, Vec::new()),
            PlotKind::Bars => {
                let mut s = bars_from_set(spec, sets)?;
                s.path_ranking = None;
                s.ranking = None;
                (s, Vec::new())
            }
            _ => {
                let c = curves(spec, sets, bands)?;
                if c.is_empty() {
                    return Err(Error::missing("nothing to plot: no curve chosen"));
                }
                (spec.clone(), c)
            }
        };
        Ok(PlotData { spec, curves })
    }

    pub fn kind(&self) -> PlotKind {
        self.spec.kind
    }

    /// How many curves (frequency kinds), lines or bar groups it draws.
    pub fn count(&self) -> usize {
        match self.spec.kind {
            PlotKind::Lines => self.spec.lines.len(),
            PlotKind::Bars => self.spec.groups.len(),
            PlotKind::SpeedMap => self.spec.cells.len(),
            _ => self.curves.len(),
        }
    }

    /// The parts to send (grids shared between curves sent once).
    pub fn to_parts(&self) -> PlotParts {
        let mut grids: Vec<Vec<f64>> = Vec::new();
        let mut metas = Vec::new();
        let mut arrays = Vec::new();
        for c in &self.curves {
            let grid = match grids.iter().position(|g| *g == c.freqs) {
                Some(k) => k,
                None => {
                    grids.push(c.freqs.clone());
                    grids.len() - 1
                }
            };
            metas.push(CurveMeta {
                label: c.label.clone(),
                db_label: c.db_label.clone(),
                unit: c.unit.clone(),
                stems: c.stems,
                grid,
                band: c.band.is_some(),
            });
            arrays.push(c.values.iter().map(|v| v.re).collect());
            arrays.push(c.values.iter().map(|v| v.im).collect());
            arrays.push(c.level.clone());
            if let Some(b) = &c.band {
                arrays.push(b.lo.clone());
                arrays.push(b.hi.clone());
                arrays.push(b.reliable.iter().map(|r| f64::from(u8::from(*r))).collect());
            }
        }
        PlotParts {
            meta: PlotMeta {
                spec: self.spec.clone(),
                curves: metas,
            },
            grids,
            arrays,
        }
    }

    /// Put the parts together again; parts that do not fit (a missing grid
    /// or array, lengths that differ) are refused, naming the curve.
    pub fn from_parts(parts: PlotParts) -> Result<PlotData> {
        let PlotParts {
            meta,
            grids,
            arrays,
        } = parts;
        let want: usize = meta.curves.iter().map(|c| if c.band { 6 } else { 3 }).sum();
        if arrays.len() != want {
            return Err(Error::usage(format!(
                "plot data: {} curves need {} arrays, {} came",
                meta.curves.len(),
                want,
                arrays.len()
            ))
            .field("arrays"));
        }
        let mut curves = Vec::with_capacity(meta.curves.len());
        let mut it = arrays.into_iter();
        for m in meta.curves {
            let (Some(re), Some(im), Some(level)) = (it.next(), it.next(), it.next()) else {
                return Err(Error::internal("plot data: arrays counted but missing"));
            };
            let freqs = grids.get(m.grid).ok_or_else(|| {
                Error::usage(format!(
                    "plot data: curve '{}' names grid {} of {}",
                    m.label,
                    m.grid,
                    grids.len()
                ))
                .field("grids")
            })?;
            let n = freqs.len();
            if re.len() != n || im.len() != n || level.len() != n {
                return Err(Error::usage(format!(
                    "plot data: curve '{}' has {} lines but {}, {} and {} values",
                    m.label,
                    n,
                    re.len(),
                    im.len(),
                    level.len()
                ))
                .field("arrays"));
            }
            let band = if m.band {
                let (Some(lo), Some(hi), Some(ok)) = (it.next(), it.next(), it.next()) else {
                    return Err(Error::internal("plot data: arrays counted but missing"));
                };
                if lo.len() != n || hi.len() != n || ok.len() != n {
                    return Err(Error::usage(format!(
                        "plot data: curve '{}' has {} lines but a band of {}, {} and {}",
                        m.label,
                        n,
                        lo.len(),
                        hi.len(),
                        ok.len()
                    ))
                    .field("arrays"));
                }
                Some(CurveBand {
                    lo,
                    hi,
                    reliable: ok.iter().map(|v| *v != 0.0).collect(),
                })
            } else {
                None
            };
            let values: Vec<Complex64> = re
                .iter()
                .zip(&im)
                .map(|(r, i)| Complex64::new(*r, *i))
                .collect();
            curves.push(Curve {
                band,
                label: m.label,
                freqs: freqs.clone(),
                phase: drawn_phase(&values, m.stems),
                values,
                level,
                db_label: m.db_label,
                unit: m.unit,
                stems: m.stems,
            });
        }
        let kind = meta.spec.kind;
        if !matches!(kind, PlotKind::Lines | PlotKind::Bars | PlotKind::SpeedMap)
            && curves.is_empty()
        {
            return Err(Error::missing("nothing to plot: no curve chosen"));
        }
        Ok(PlotData {
            spec: meta.spec,
            curves,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::{sdof, spec};
    use super::super::render::draw_data;
    use super::super::render_svg;
    use super::*;
    use plotters::prelude::SVGBackend;

    fn svg_of(data: &PlotData, view: &View) -> String {
        let mut s = String::new();
        {
            let mut b = SVGBackend::with_string(&mut s, (960, 540));
            draw_data(&mut b, data, view).unwrap();
        }
        s
    }

    #[test]
    fn parts_round_trip_and_draw_the_same_svg() {
        let mut sets = sdof();
        let mut b = sets["a"].clone();
        b.freqs.truncate(100);
        b.data.truncate(100);
        sets.insert("b".into(), b);
        let mut s = spec("bode");
        s.series.push(s.series[0].clone());
        s.series.push(crate::plot::SeriesRef {
            set: "b".into(),
            out: 0,
            inp: 0,
            label: None,
        });
        let data = PlotData::resolve(&s, &sets).unwrap();
        let parts = data.to_parts();
        assert_eq!(
            parts.grids.len(),
            2,
            "a grid shared by two curves is sent once"
        );
        assert_eq!(parts.arrays.len(), 9);
        let back = PlotData::from_parts(parts.clone()).unwrap();
        let view = View::of(&s);
        assert_eq!(svg_of(&data, &view), svg_of(&back, &view));
        // and the same as the one-step drawing from the sets
        let (svg, _) = render_svg(&s, &sets).unwrap();
        assert_eq!(svg, svg_of(&back, &view));
        // parts that do not fit are refused, not drawn
        let mut bad = parts.clone();
        bad.arrays[4].pop();
        let e = PlotData::from_parts(bad).unwrap_err();
        assert!(e.message.contains("has 400 lines"), "{e}");
        let mut bad = parts;
        bad.meta.curves[0].grid = 7;
        assert!(PlotData::from_parts(bad).is_err());
    }

    #[test]
    fn a_view_is_all_a_redraw_changes() {
        let s = spec("bode");
        let data = PlotData::resolve(&s, &sdof()).unwrap();
        let mut zoomed = s.clone();
        zoomed.x_range = Some([10.0, 20.0]);
        zoomed.db = false;
        let (want, _) = render_svg(&zoomed, &sdof()).unwrap();
        assert_eq!(svg_of(&data, &View::of(&zoomed)), want);
        let v: std::result::Result<View, _> = serde_json::from_str(r#"{"zoom": 2}"#);
        assert!(v.is_err(), "an unknown switch is refused");
    }
}
