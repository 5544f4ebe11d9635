//! Each kind of plot laid out and drawn: [`draw`] on any backend (FRF
//! plots in one or two panels, numeric lines, grouped bars) and
//! [`render_svg`] to SVG text.
//!
//! Not here: the primitives (`draw.rs`), ranges and ticks (`layout.rs`),
//! the data (`data.rs`).

use super::data::Curve;
use super::draw::{
    axes, colour, derr, draw_band, draw_curves, draw_curves_stems, draw_pale, legend, legend_with,
    text,
};
use super::layout::{finite_range, in_x, pad, x_axis, y_axis, Axis, Panel};
use super::resolved::{PlotData, View};
use super::spec::{Frame, LegendEntry, PlotKind, PlotSpec};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::collections::BTreeMap;

/// Draw `spec` on a backend. Returns the panels' frames.
pub fn draw<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    sets: &BTreeMap<String, FrfSet>,
) -> Result<Vec<Frame>> {
    let data = PlotData::resolve(spec, sets)?;
    Ok(draw_data(b, &data, &View::of(spec))?.frames)
}

/// What a drawing returns: each panel's frame, and the legend's entries in
/// the order and styles drawn (the page lists them beside the plot when
/// there are too many to name inside it).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Drawn {
    pub frames: Vec<Frame>,
    /// Empty until the pass that draws the legend (the last).
    pub legend: Vec<LegendEntry>,
    /// The first curve not drawn yet (a later pass's `from`), or None when
    /// the drawing is complete.
    pub next: Option<usize>,
}

/// Which part of a drawing one call makes: the frame (background, title,
/// grid, axes) when `from` is 0, the curves `from..to` in the order chosen,
/// and the legend when `to` reaches the last curve. The page's canvas draws
/// many curves in several passes, each in a main-thread task of its own, on
/// the canvas the earlier passes drew; every SVG is drawn in one pass
/// ([`Pass::ALL`]). The passes of one view make the same pixels as one pass:
/// the layout (ranges, panels) is computed from all curves in each.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Pass {
    pub from: usize,
    pub to: usize,
}

impl Pass {
    /// The whole drawing at once.
    pub const ALL: Pass = Pass {
        from: 0,
        to: usize::MAX,
    };
}

/// What a pass draws of one panel's curves.
struct Part {
    frame: bool,
    legend: bool,
    /// Per curve (in the panel's order): drawn in this pass.
    drawn: Vec<bool>,
}

impl Part {
    fn of(pass: Pass, n: usize) -> Part {
        Part {
            frame: pass.from == 0,
            legend: pass.to >= n,
            drawn: (0..n).map(|i| i >= pass.from && i < pass.to).collect(),
        }
    }
    /// The part of a group of the curves (their indices).
    fn subset(&self, idx: &[usize]) -> Part {
        Part {
            frame: self.frame,
            legend: self.legend,
            drawn: idx.iter().map(|&i| self.drawn[i]).collect(),
        }
    }
}

/// Draw resolved data with a view (switches and zoom) on a backend: the
/// one drawing behind the page's canvas and every SVG.
pub fn draw_data<DB: DrawingBackend>(b: &mut DB, data: &PlotData, view: &View) -> Result<Drawn> {
    draw_data_pass(b, data, view, Pass::ALL)
}

/// [`draw_data`] in passes: the part `pass` names, on what earlier passes
/// of the same view drew (see [`Pass`]). Bars are drawn whole in the first
/// pass.
pub fn draw_data_pass<DB: DrawingBackend>(
    b: &mut DB,
    data: &PlotData,
    view: &View,
    pass: Pass,
) -> Result<Drawn> {
    let (w, h) = b.get_size();
    let (w, h) = (w as i32, h as i32);
    if pass.from == 0 {
        b.draw_rect((0, 0), (w, h), &WHITE, true).map_err(derr)?;
    }
    let mut resolved = data.spec.clone();
    resolved.db = view.db;
    resolved.x_log = view.x_log;
    resolved.y_log = view.y_log;
    resolved.x_range = view.x_range;
    resolved.y_range = view.y_range;
    let spec = &resolved;
    let top = if spec.title.is_empty() { 14 } else { 34 };
    if !spec.title.is_empty() && pass.from == 0 {
        text(
            b,
            &spec.title,
            (w / 2, 8),
            15.0,
            Pos::new(HPos::Center, VPos::Top),
            false,
        )?;
    }
    let (left, right, bottom) = (84, w - 18, h - 52);
    let mut legend = Vec::new();
    let curves: Vec<&Curve> = data.curves.iter().collect();
    let n = match spec.kind {
        PlotKind::Lines => spec.lines.len(),
        PlotKind::Bars | PlotKind::SpeedMap => 0,
        _ => curves.len(),
    };
    if pass.from >= pass.to || (pass.from > 0 && pass.from >= n) {
        return Err(Error::usage(format!(
            "drawing pass {}..{} of a plot of {n} curves",
            pass.from, pass.to
        ))
        .field("pass"));
    }
    let part = Part::of(pass, n);
    let frames = match spec.kind {
        PlotKind::Lines => draw_lines(b, spec, (left, top, right, bottom), &mut legend, &part)?,
        PlotKind::Bars => draw_bars(b, spec, (left, top, right, bottom), &mut legend)?,
        PlotKind::SpeedMap => super::map::draw_map(b, spec, (left, top, right, bottom))?,
        PlotKind::Difference => {
            if curves.is_empty() {
                return Err(Error::missing("nothing to plot: no curve chosen"));
            }
            // a level difference is drawn as levels, on one axis
            let mut s = spec.clone();
            s.db = true;
            draw_frf(
                b,
                &s,
                PlotKind::Magnitude,
                &curves,
                (left, top, right, bottom),
                &mut legend,
                &part,
            )?
        }
        kind => {
            if curves.is_empty() {
                return Err(Error::missing("nothing to plot: no curve chosen"));
            }
            draw_frf(
                b,
                spec,
                kind,
                &curves,
                (left, top, right, bottom),
                &mut legend,
                &part,
            )?
        }
    };
    b.present().map_err(derr)?;
    let next = (pass.to < n).then_some(pass.to);
    Ok(Drawn {
        frames,
        legend,
        next,
    })
}

/// The most stacked groups one plot draws: curves of more quantities than
/// this are refused (each group needs a readable height).
pub const MAX_AXIS_GROUPS: usize = 4;

/// Curves of different quantities or references never share a y axis: each
/// group of one unit (one dB reference when levels are drawn) gets its own
/// panels, stacked, on the same frequency axis. A Nyquist view shows one
/// quantity or is refused.
/// What a curve's legend entry adds about its band: the band (on dB
/// axes) and the pale stretches, when it has any.
fn band_note(band: &super::band::CurveBand, db: bool) -> String {
    let bad = band.reliable.iter().filter(|r| !**r).count();
    let mut parts = Vec::new();
    if db {
        parts.push("shaded: 95 % band".to_string());
    }
    if bad > 0 {
        parts.push(format!(
            "pale: {bad} of {} lines not reliable",
            band.reliable.len()
        ));
    }
    if parts.is_empty() {
        String::new()
    } else {
        format!(" ({})", parts.join("; "))
    }
}

fn draw_frf<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    kind: PlotKind,
    curves: &[&Curve],
    (left, top, right, bottom): (i32, i32, i32, i32),
    legend_out: &mut Vec<LegendEntry>,
    part: &Part,
) -> Result<Vec<Frame>> {
    let levels = spec.db && kind != PlotKind::ReIm && kind != PlotKind::Nyquist;
    let key = |c: &Curve| {
        if levels {
            c.db_label.clone()
        } else {
            c.unit.clone()
        }
    };
    let mut groups: Vec<(String, Vec<usize>)> = Vec::new();
    for (i, c) in curves.iter().enumerate() {
        let k = key(c);
        match groups.iter_mut().find(|(g, _)| *g == k) {
            Some((_, v)) => v.push(i),
            None => groups.push((k, vec![i])),
        }
    }
    if groups.len() > 1 {
        let names: Vec<String> = groups.iter().map(|(g, _)| g.clone()).collect();
        if kind == PlotKind::Nyquist {
            return Err(Error::usage(format!(
                "a Nyquist view shows curves of one quantity; the chosen curves are in {}: choose curves of one of them, or the level view, which stacks one panel per quantity",
                names.join(" and ")
            ))
            .field("plot"));
        }
        if groups.len() > MAX_AXIS_GROUPS {
            return Err(Error::usage(format!(
                "the chosen curves are in {} different units or references ({}); one plot stacks at most {MAX_AXIS_GROUPS} axes: choose fewer kinds of curve",
                groups.len(),
                names.join(", ")
            ))
            .field("plot"));
        }
        let n = groups.len() as i32;
        let gap = 22;
        let h = (bottom - top - gap * (n - 1)) / n;
        let mut frames = Vec::new();
        for (i, (_, g)) in groups.iter().enumerate() {
            let t = top + i as i32 * (h + gap);
            let mut s = spec.clone();
            if i > 0 {
                // a zoom of the y axis belongs to the first panel's unit
                s.y_range = None;
            }
            let g_curves: Vec<&Curve> = g.iter().map(|&k| curves[k]).collect();
            frames.extend(draw_frf(
                b,
                &s,
                kind,
                &g_curves,
                (left, t, right, t + h),
                legend_out,
                &part.subset(g),
            )?);
        }
        return Ok(frames);
    }
    // One unit and reference from here on; labels name them where they
    // still differ (they cannot: the groups above split them).
    let mixed_db = curves.iter().any(|c| c.db_label != curves[0].db_label);
    let mixed_unit = curves.iter().any(|c| c.unit != curves[0].unit);
    let level_db_mixed = spec.db && kind != PlotKind::ReIm && kind != PlotKind::Nyquist;
    let labels: Vec<String> = curves
        .iter()
        .map(|c| {
            let l = if level_db_mixed && mixed_db {
                format!("{} [{}]", c.label, c.db_label)
            } else if !level_db_mixed && mixed_unit {
                format!("{} [{}]", c.label, c.unit)
            } else {
                c.label.clone()
            };
            match &c.band {
                Some(band) => format!("{l}{}", band_note(band, level_db_mixed)),
                None => l,
            }
        })
        .collect();
    let unit_text = if mixed_unit {
        "units in the legend".to_string()
    } else {
        curves[0].unit.clone()
    };
    let db_text = if mixed_db {
        "dB, reference in the legend".to_string()
    } else {
        curves[0].db_label.clone()
    };
    // the points of curve i, made only when this pass draws it
    let fx = |i: usize, c: &Curve, ys: &dyn Fn(&Curve) -> Vec<f64>| -> Vec<(f64, f64)> {
        if part.drawn[i] {
            c.freqs.iter().copied().zip(ys(c)).collect()
        } else {
            Vec::new()
        }
    };
    let freq_title = "frequency (Hz)";
    match kind {
        PlotKind::Nyquist => {
            let pts: Vec<Vec<(f64, f64)>> = curves
                .iter()
                .map(|c| c.values.iter().map(|v| (v.re, v.im)).collect())
                .collect();
            let xr = finite_range(pts.iter().flatten().map(|p| p.0), false).unwrap_or((-1.0, 1.0));
            let (xa, xb) = pad(xr.0, xr.1, false);
            let mut x = Axis {
                min: xa,
                max: xb,
                log: false,
            };
            if let Some([a, bb]) = spec.x_range {
                if a < bb {
                    x = Axis {
                        min: a,
                        max: bb,
                        log: false,
                    };
                }
            }
            let y = y_axis(
                spec.y_range,
                pts.iter().flatten().map(|p| p.1).collect(),
                false,
                false,
            );
            let p = Panel {
                x0: left,
                y0: top,
                x1: right,
                y1: bottom,
                x,
                y,
            };
            let u = &unit_text;
            if part.frame {
                axes(
                    b,
                    &p,
                    Some(&format!("real part ({u})")),
                    &format!("imaginary part ({u})"),
                    None,
                    true,
                )?;
            }
            draw_curves(b, &p, &pts, &part.drawn)?;
            if part.legend {
                legend_out.extend(legend(b, &p, &labels)?);
            }
            Ok(vec![p.frame("real")])
        }
        PlotKind::Bode | PlotKind::Magnitude | PlotKind::ReIm => {
            let x = x_axis(spec, curves)?;
            let two = kind != PlotKind::Magnitude;
            let split = if kind == PlotKind::Bode {
                top + ((bottom - top) as f64 * 0.64) as i32
            } else {
                top + (bottom - top) / 2
            };
            let (y1a, y0b) = if two {
                (split - 14, split + 14)
            } else {
                (bottom, bottom)
            };
            let visible_vals = |f: &dyn Fn(&Curve, usize) -> f64| -> Vec<f64> {
                curves
                    .iter()
                    .flat_map(|c| {
                        (0..c.freqs.len())
                            .filter(|k| in_x(&x, c.freqs[*k]))
                            .map(|k| f(c, k))
                            .collect::<Vec<_>>()
                    })
                    .collect()
            };
            let (top_pts, top_axis, top_title): (Vec<Vec<(f64, f64)>>, Axis, String) = if kind
                == PlotKind::ReIm
            {
                let v = visible_vals(&|c, k| c.values[k].re);
                (
                    curves
                        .iter()
                        .enumerate()
                        .map(|(i, c)| fx(i, c, &|c| c.values.iter().map(|v| v.re).collect()))
                        .collect(),
                    y_axis(spec.y_range, v, false, false),
                    format!("real part ({unit_text})"),
                )
            } else if spec.db {
                let v = visible_vals(&|c, k| c.level[k]);
                (
                    curves
                        .iter()
                        .enumerate()
                        .map(|(i, c)| fx(i, c, &|c| c.level.clone()))
                        .collect(),
                    y_axis(spec.y_range, v, false, true),
                    format!("level ({db_text})"),
                )
            } else {
                let v = visible_vals(&|c, k| c.values[k].norm());
                (
                    curves
                        .iter()
                        .enumerate()
                        .map(|(i, c)| fx(i, c, &|c| c.values.iter().map(|v| v.norm()).collect()))
                        .collect(),
                    y_axis(spec.y_range, v, false, false),
                    format!("magnitude ({unit_text})"),
                )
            };
            let p1 = Panel {
                x0: left,
                y0: top,
                x1: right,
                y1: y1a,
                x,
                y: top_axis,
            };
            if part.frame {
                axes(
                    b,
                    &p1,
                    if two { None } else { Some(freq_title) },
                    &top_title,
                    None,
                    true,
                )?;
            }
            let stems: Vec<bool> = curves.iter().map(|c| c.stems).collect();
            // bands on the level axis in dB, under the curves
            if kind != PlotKind::ReIm && spec.db {
                for (i, c) in curves.iter().enumerate() {
                    if let (true, Some(band)) = (part.drawn[i], &c.band) {
                        draw_band(b, &p1, i, &c.freqs, band, c.stems)?;
                    }
                }
            }
            draw_curves_stems(
                b,
                &p1,
                &top_pts,
                &stems,
                kind != PlotKind::ReIm,
                &part.drawn,
            )?;
            let pale = |b: &mut DB, p: &Panel, pts: &[Vec<(f64, f64)>]| -> Result<()> {
                for (i, c) in curves.iter().enumerate() {
                    if let (true, false, Some(band)) = (part.drawn[i], c.stems, &c.band) {
                        draw_pale(b, p, i, curves.len(), &pts[i], &band.reliable)?;
                    }
                }
                Ok(())
            };
            pale(b, &p1, &top_pts)?;
            let mut frames = vec![p1.frame("frequency")];
            if two {
                let (pts, axis, title, fixed): (_, Axis, String, Option<Vec<f64>>) = if kind
                    == PlotKind::ReIm
                {
                    let v = visible_vals(&|c, k| c.values[k].im);
                    (
                        curves
                            .iter()
                            .enumerate()
                            .map(|(i, c)| fx(i, c, &|c| c.values.iter().map(|v| v.im).collect()))
                            .collect::<Vec<_>>(),
                        y_axis(None, v, false, false),
                        format!("imaginary part ({unit_text})"),
                        None,
                    )
                } else {
                    (
                        // (an empty line of a line spectrum has no phase: NaN)
                        curves
                            .iter()
                            .enumerate()
                            .map(|(i, c)| fx(i, c, &|c| c.phase.clone()))
                            .collect::<Vec<_>>(),
                        Axis {
                            min: -180.0,
                            max: 180.0,
                            log: false,
                        },
                        "phase (°)".to_string(),
                        Some(vec![-180.0, -90.0, 0.0, 90.0, 180.0]),
                    )
                };
                let p2 = Panel {
                    x0: left,
                    y0: y0b,
                    x1: right,
                    y1: bottom,
                    x,
                    y: axis,
                };
                if part.frame {
                    axes(b, &p2, Some(freq_title), &title, fixed.as_deref(), true)?;
                }
                // Phase wraps at ±180°: break the line there instead of drawing a vertical jump.
                let pts: Vec<Vec<(f64, f64)>> = if kind == PlotKind::Bode {
                    pts.into_iter()
                        .map(|c: Vec<(f64, f64)>| {
                            let mut o = Vec::with_capacity(c.len());
                            for (i, q) in c.iter().enumerate() {
                                if i > 0 && (q.1 - c[i - 1].1).abs() > 180.0 {
                                    o.push((f64::NAN, f64::NAN));
                                }
                                o.push(*q);
                            }
                            o
                        })
                        .collect()
                } else {
                    pts
                };
                draw_curves_stems(b, &p2, &pts, &stems, false, &part.drawn)?;
                pale(b, &p2, &pts)?;
                frames.push(p2.frame("frequency"));
            }
            if part.legend {
                legend_out.extend(legend(b, &p1, &labels)?);
            }
            Ok(frames)
        }
        PlotKind::Lines | PlotKind::Bars | PlotKind::Difference | PlotKind::SpeedMap => {
            Err(Error::usage("not an FRF plot"))
        }
    }
}

fn draw_lines<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    (left, top, right, bottom): (i32, i32, i32, i32),
    legend_out: &mut Vec<LegendEntry>,
    part: &Part,
) -> Result<Vec<Frame>> {
    if spec.lines.is_empty() {
        return Err(Error::missing("nothing to plot: no lines given"));
    }
    for l in &spec.lines {
        if l.x.len() != l.y.len() {
            return Err(Error::usage(format!(
                "line '{}' has {} x values and {} y values",
                l.label,
                l.x.len(),
                l.y.len()
            ))
            .field("lines"));
        }
    }
    let (lo, hi) = match spec.x_range {
        Some([a, c]) if a < c => (a, c),
        _ => finite_range(
            spec.lines.iter().flat_map(|l| l.x.iter().copied()),
            spec.x_log,
        )
        .ok_or_else(|| Error::missing("nothing to plot: no x values"))?,
    };
    let x = Axis {
        min: lo,
        max: if hi > lo { hi } else { lo + 1.0 },
        log: spec.x_log,
    };
    let vals: Vec<f64> = spec
        .lines
        .iter()
        .flat_map(|l| {
            l.x.iter()
                .zip(&l.y)
                .filter(|(xv, _)| in_x(&x, **xv))
                .map(|(_, y)| *y)
                .collect::<Vec<_>>()
        })
        .collect();
    let y = y_axis(spec.y_range, vals, spec.y_log, false);
    let p = Panel {
        x0: left,
        y0: top,
        x1: right,
        y1: bottom,
        x,
        y,
    };
    let xt = if spec.x_label.is_empty() {
        "frequency (Hz)"
    } else {
        &spec.x_label
    };
    if part.frame {
        axes(b, &p, Some(xt), &spec.y_label, None, true)?;
    }
    let pts: Vec<Vec<(f64, f64)>> = spec
        .lines
        .iter()
        .map(|l| l.x.iter().copied().zip(l.y.iter().copied()).collect())
        .collect();
    draw_curves(b, &p, &pts, &part.drawn)?;
    if !part.legend {
        return Ok(vec![p.frame("x")]);
    }
    *legend_out = legend(
        b,
        &p,
        &spec
            .lines
            .iter()
            .map(|l| l.label.clone())
            .collect::<Vec<_>>(),
    )?;
    Ok(vec![p.frame("x")])
}

fn draw_bars<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    (left, top, right, bottom): (i32, i32, i32, i32),
    legend_out: &mut Vec<LegendEntry>,
) -> Result<Vec<Frame>> {
    let n = spec.categories.len();
    if n == 0 || spec.groups.is_empty() {
        return Err(Error::missing("nothing to plot: no bars given"));
    }
    for g in &spec.groups {
        if g.values.len() != n {
            return Err(Error::usage(format!(
                "bar group '{}' has {} values for {} categories",
                g.label,
                g.values.len(),
                n
            ))
            .field("groups"));
        }
    }
    let bottom = bottom - 16;
    let vals: Vec<f64> = spec.groups.iter().flat_map(|g| g.values.clone()).collect();
    let mut y = y_axis(spec.y_range, vals, false, true);
    if spec.y_range.is_none() {
        y.max += 10.0;
    }
    let p = Panel {
        x0: left,
        y0: top,
        x1: right,
        y1: bottom,
        x: Axis {
            min: 0.0,
            max: n as f64,
            log: false,
        },
        y,
    };
    axes(b, &p, None, &spec.y_label, None, false)?;
    let ng = spec.groups.len() as f64;
    for (gi, g) in spec.groups.iter().enumerate() {
        for (ci, v) in g.values.iter().enumerate() {
            if !v.is_finite() {
                continue;
            }
            let xa = ci as f64 + 0.12 + 0.76 * gi as f64 / ng;
            let xb = xa + 0.76 / ng * 0.92;
            let (x0, y0) = p.px(xa, v.clamp(y.min, y.max));
            let (x1, y1) = p.px(xb, y.min);
            let c = colour(gi);
            b.draw_rect(
                (x0.round() as i32, y0.round() as i32),
                (x1.round() as i32, y1.round() as i32),
                &c,
                true,
            )
            .map_err(derr)?;
            // Hatching on alternate groups keeps them apart in grey-scale print.
            if gi % 2 == 1 {
                let mut yy = y0 + 4.0;
                while yy < y1 {
                    b.draw_line(
                        (x0.round() as i32, yy.round() as i32),
                        (x1.round() as i32, (yy - 4.0).round() as i32),
                        &WHITE,
                    )
                    .map_err(derr)?;
                    yy += 6.0;
                }
            }
        }
    }
    for (ci, c) in spec.categories.iter().enumerate() {
        let (x, _) = p.px(ci as f64 + 0.5, y.min);
        text(
            b,
            c,
            (x.round() as i32, bottom + 6),
            12.0,
            Pos::new(HPos::Center, VPos::Top),
            false,
        )?;
    }
    if !spec.x_label.is_empty() {
        text(
            b,
            &spec.x_label,
            ((left + right) / 2, bottom + 26),
            13.0,
            Pos::new(HPos::Center, VPos::Top),
            false,
        )?;
    }
    let labels: Vec<String> = spec.groups.iter().map(|g| g.label.clone()).collect();
    *legend_out = legend_with(b, &p, &labels, true)?;
    Ok(vec![p.frame("category")])
}

/// The plot sizes drawn (px): from 200×150 to 8000×8000.
pub fn check_size(width: u32, height: u32) -> Result<()> {
    if width < 200 || height < 150 || width > 8000 || height > 8000 {
        return Err(Error::usage(format!(
            "plot size {width}×{height} px is outside 200×150 to 8000×8000"
        ))
        .field("width/height"));
    }
    Ok(())
}

/// Render `spec` to SVG text.
pub fn render_svg(
    spec: &PlotSpec,
    sets: &BTreeMap<String, FrfSet>,
) -> Result<(String, Vec<Frame>)> {
    check_size(spec.width, spec.height)?;
    let data = PlotData::resolve(spec, sets)?;
    let (svg, drawn) = render_data_svg(&data, &View::of(spec), spec.width, spec.height)?;
    Ok((svg, drawn.frames))
}

/// Render resolved data with a view to SVG text of `width` × `height` px:
/// the page's SVG export of what its canvas shows.
pub fn render_data_svg(
    data: &PlotData,
    view: &View,
    width: u32,
    height: u32,
) -> Result<(String, Drawn)> {
    check_size(width, height)?;
    let mut s = String::new();
    let drawn = {
        let mut b = SVGBackend::with_string(&mut s, (width, height));
        draw_data(&mut b, data, view)?
    };
    Ok((s, drawn))
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::{sdof, spec};
    use super::*;

    /// The drawn elements of an SVG, one per line, sorted (the header and
    /// the closing tag left out).
    fn elements(svg: &str) -> Vec<String> {
        let mut v: Vec<String> = svg
            .lines()
            .map(str::trim)
            .filter(|l| !l.is_empty() && !l.starts_with("<svg") && *l != "</svg>")
            .map(String::from)
            .collect();
        v.sort();
        v
    }

    #[test]
    fn passes_draw_what_one_pass_draws() {
        // one entry drawn seven times, in passes of 3: the same elements as
        // one pass, the legend only in the last
        let series: Vec<String> = (0..7)
            .map(|_| r#"{"set":"a","out":0,"in":0}"#.to_string())
            .collect();
        for kind in ["bode", "magnitude", "re-im", "nyquist"] {
            let spec = PlotSpec::from_json(&format!(
                r#"{{"kind":"{kind}","series":[{}],"title":"t"}}"#,
                series.join(",")
            ))
            .unwrap();
            let data = PlotData::resolve(&spec, &sdof()).unwrap();
            let view = View::of(&spec);
            let (one, all) = render_data_svg(&data, &view, 800, 500).unwrap();
            assert_eq!(all.next, None);
            let mut parts = String::new();
            let mut from = 0;
            let mut passes = 0;
            loop {
                let mut s = String::new();
                let d = {
                    let mut b = SVGBackend::with_string(&mut s, (800, 500));
                    draw_data_pass(&mut b, &data, &view, Pass { from, to: from + 3 }).unwrap()
                };
                assert_eq!(
                    d.frames, all.frames,
                    "{kind}: every pass lays out the same panels"
                );
                parts.push_str(&s);
                passes += 1;
                match d.next {
                    Some(n) => {
                        assert!(d.legend.is_empty());
                        from = n;
                    }
                    None => {
                        assert_eq!(d.legend, all.legend);
                        break;
                    }
                }
            }
            assert_eq!(passes, 3, "{kind}");
            assert_eq!(elements(&parts), elements(&one), "{kind}");
        }
        // a pass past the curves is refused, naming the pass
        let data = PlotData::resolve(&spec("bode"), &sdof()).unwrap();
        let mut s = String::new();
        let mut b = SVGBackend::with_string(&mut s, (800, 500));
        let e = draw_data_pass(
            &mut b,
            &data,
            &View::of(&spec("bode")),
            Pass { from: 5, to: 8 },
        )
        .unwrap_err();
        assert_eq!(e.field.as_deref(), Some("pass"));
    }

    #[test]
    fn bode_svg_has_two_panels_and_reference_label() {
        let (svg, frames) = render_svg(&spec("bode"), &sdof()).unwrap();
        assert_eq!(frames.len(), 2);
        assert!(svg.starts_with("<svg"));
        assert!(
            svg.contains("dB re 1 (m)/(N)"),
            "dB axis names its reference"
        );
        assert!(svg.contains("phase (°)"));
        assert!(frames[0].x_log && frames[0].x_min == 0.5 && frames[0].x_max == 200.0);
    }

    #[test]
    fn every_kind_draws() {
        for k in ["bode", "magnitude", "re-im", "nyquist"] {
            render_svg(&spec(k), &sdof()).unwrap();
        }
        let lines = PlotSpec::from_json(
            r#"{"kind":"lines","lines":[{"label":"κ","x":[1,2,3],"y":[1,10,100]}],"y_log":true}"#,
        )
        .unwrap();
        let (_, f) = render_svg(&lines, &BTreeMap::new()).unwrap();
        assert!(f[0].y_log);
        let bars = PlotSpec::from_json(
            r#"{"kind":"bars","categories":["A1","A2"],"groups":[{"label":"now","values":[30,20]},{"label":"soft","values":[25,18]}]}"#,
        )
        .unwrap();
        render_svg(&bars, &BTreeMap::new()).unwrap();
        let cond = PlotSpec::from_json(
            r#"{"kind":"lines","lines":[{"label":"c","y":[1,2],"x_from":"a"}]}"#,
        )
        .unwrap();
        // 2 values against 400 lines: a clear error, not a wrong plot.
        assert!(render_svg(&cond, &sdof()).is_err());
    }

    #[test]
    fn mixed_quantities_never_share_an_axis() {
        // a mobility and a vibro-acoustic FRF: two stacked groups, each with its own axis
        let mut sets = sdof();
        let mut v = sets["a"].to_kind("mobility").unwrap();
        v.name = "v".into();
        sets.insert("b".into(), v);
        let mut p = sets["a"].clone();
        p.out_qty = crate::units::Quantity::Pressure;
        p.name = "p".into();
        sets.insert("c".into(), p);
        let spec = PlotSpec::from_json(r#"{"series":[{"set":"b"},{"set":"c"}]}"#).unwrap();
        let (svg, frames) = render_svg(&spec, &sets).unwrap();
        assert_eq!(frames.len(), 4, "level and phase panels for each quantity");
        assert!(svg.contains("level (dB re 1 (m/s)/(N))"), "mobility axis");
        assert!(svg.contains("level (dB re 1 (Pa)/(N))"), "pressure axis");
        assert!(!svg.contains("reference in the legend"));
        assert!(frames[0].y1 < frames[2].y0, "stacked, not overlaid");
        // linear magnitude and re/im split by unit too
        for k in ["magnitude", "re-im"] {
            let mut s = spec.clone();
            s.kind = PlotSpec::from_json(&format!(r#"{{"kind":"{k}"}}"#))
                .unwrap()
                .kind;
            s.db = false;
            let (_, f) = render_svg(&s, &sets).unwrap();
            assert_eq!(f.len(), if k == "magnitude" { 2 } else { 4 }, "{k}");
        }
        // a Nyquist view of two quantities is refused with the reason
        let mut s = spec.clone();
        s.kind = PlotKind::Nyquist;
        let e = render_svg(&s, &sets).unwrap_err();
        assert!(e.message.contains("one quantity"), "{}", e.message);
        // one quantity: one axis as before
        let same = PlotSpec::from_json(r#"{"series":[{"set":"a"},{"set":"a"}]}"#).unwrap();
        assert_eq!(render_svg(&same, &sets).unwrap().1.len(), 2);
    }

    #[test]
    fn bad_series_is_an_error_not_a_panic() {
        let mut s = spec("bode");
        s.series[0].out = 3;
        assert!(render_svg(&s, &sdof()).is_err());
        s.series[0].set = "none".into();
        assert!(render_svg(&s, &sdof()).is_err());
        let mut s = spec("bode");
        s.x_range = Some([10.0, 1.0]);
        assert!(render_svg(&s, &sdof()).is_err());
    }
}
