//! Layout in pixels, with no backend calls: axis ranges (padding, zoom,
//! dB steps), ticks (1-2-5 linear, decades with labelled multiples on log
//! axes) and their text, panels mapping values to pixels and giving their
//! [`Frame`], and the visible part of a curve (clipping, gaps at non-finite
//! values).
//!
//! Not here: drawing (`draw.rs`).

use super::data::Curve;
use super::spec::{Frame, PlotSpec};
use crate::error::{Error, Result};

#[derive(Debug, Clone, Copy)]
pub(super) struct Axis {
    pub(super) min: f64,
    pub(super) max: f64,
    pub(super) log: bool,
}

/// An axis's map of values to 0..1 with its ends' logarithms taken once
/// (a redraw maps hundreds of thousands of points).
#[derive(Debug, Clone, Copy)]
pub(super) struct Scale {
    log: bool,
    a: f64,
    d: f64,
}

impl Scale {
    pub(super) fn t(&self, v: f64) -> f64 {
        if self.log {
            (v.log10() - self.a) / self.d
        } else {
            (v - self.a) / self.d
        }
    }
}

impl Axis {
    pub(super) fn scale(&self) -> Scale {
        if self.log {
            let a = self.min.log10();
            Scale {
                log: true,
                a,
                d: self.max.log10() - a,
            }
        } else {
            Scale {
                log: false,
                a: self.min,
                d: self.max - self.min,
            }
        }
    }
    fn t(&self, v: f64) -> f64 {
        self.scale().t(v)
    }
    pub(super) fn ticks(&self) -> (Vec<f64>, Vec<f64>) {
        if self.log {
            log_ticks(self.min, self.max)
        } else {
            (lin_ticks(self.min, self.max), Vec::new())
        }
    }
}

/// Ticks at 1-2-5 steps covering [a, b].
fn lin_ticks(a: f64, b: f64) -> Vec<f64> {
    let span = b - a;
    if span.is_nan() || span <= 0.0 || !span.is_finite() {
        return vec![a];
    }
    let raw = span / 6.0;
    let p = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * p)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * p);
    let mut v = (a / step).ceil() * step;
    let mut out = Vec::new();
    while v <= b + step * 1e-9 && out.len() < 50 {
        out.push(if v.abs() < step * 1e-9 { 0.0 } else { v });
        v += step;
    }
    out
}

/// Major ticks (labelled) and minor ticks on a log axis.
fn log_ticks(a: f64, b: f64) -> (Vec<f64>, Vec<f64>) {
    let (mut major, mut minor) = (Vec::new(), Vec::new());
    let decades = (b / a).log10();
    let labelled: &[f64] = if decades <= 1.2 {
        &[1.0, 2.0, 3.0, 5.0, 7.0]
    } else if decades <= 3.5 {
        &[1.0, 2.0, 5.0]
    } else {
        &[1.0]
    };
    let e0 = a.log10().floor() as i32;
    let e1 = b.log10().ceil() as i32;
    for e in e0..=e1 {
        let p = 10f64.powi(e);
        for m in 1..10 {
            let v = m as f64 * p;
            if v < a * (1.0 - 1e-9) || v > b * (1.0 + 1e-9) {
                continue;
            }
            if labelled.contains(&(m as f64)) {
                major.push(v);
            } else {
                minor.push(v);
            }
        }
    }
    (major, minor)
}

/// Short tick text: 1.5k for 1500, 0.2 for 0.2, 1e-05 for tiny values.
pub fn tick_text(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 {
        return "0".into();
    }
    if !(1e-3..1e6).contains(&a) {
        return format!("{v:.0e}");
    }
    if a >= 1e3 {
        return format!("{}k", trim(v / 1e3));
    }
    trim(v)
}

fn trim(v: f64) -> String {
    let s = format!("{v:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

pub(super) struct Panel {
    pub(super) x0: i32,
    pub(super) y0: i32,
    pub(super) x1: i32,
    pub(super) y1: i32,
    pub(super) x: Axis,
    pub(super) y: Axis,
}

impl Panel {
    pub(super) fn px(&self, x: f64, y: f64) -> (f64, f64) {
        (
            self.x0 as f64 + self.x.t(x) * (self.x1 - self.x0) as f64,
            self.y1 as f64 - self.y.t(y) * (self.y1 - self.y0) as f64,
        )
    }
    pub(super) fn frame(&self, x_is: &str) -> Frame {
        Frame {
            x0: self.x0,
            y0: self.y0,
            x1: self.x1,
            y1: self.y1,
            x_min: self.x.min,
            x_max: self.x.max,
            x_log: self.x.log,
            y_min: self.y.min,
            y_max: self.y.max,
            y_log: self.y.log,
            x_is: x_is.into(),
        }
    }
}

/// Clip segment p–q to the rectangle (Liang–Barsky); None when outside.
fn clip(p: (f64, f64), q: (f64, f64), r: (f64, f64, f64, f64)) -> Option<((f64, f64), (f64, f64))> {
    let (dx, dy) = (q.0 - p.0, q.1 - p.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (pk, qk) in [
        (-dx, p.0 - r.0),
        (dx, r.2 - p.0),
        (-dy, p.1 - r.1),
        (dy, r.3 - p.1),
    ] {
        if pk == 0.0 {
            if qk < 0.0 {
                return None;
            }
        } else {
            let t = qk / pk;
            // comparisons, not f64::max/min: no NaN can reach here (pk ≠ 0, finite
            // pixels), and wasm calls a library function for f64::max
            if pk < 0.0 {
                if t > t0 {
                    t0 = t;
                }
            } else if t < t1 {
                t1 = t;
            }
        }
    }
    if t0 > t1 {
        return None;
    }
    Some((
        (p.0 + t0 * dx, p.1 + t0 * dy),
        (p.0 + t1 * dx, p.1 + t1 * dy),
    ))
}

/// Polylines of the visible part of a curve, in pixels.
#[cfg(test)]
pub(super) fn visible(panel: &Panel, pts: &[(f64, f64)]) -> Vec<Vec<(f64, f64)>> {
    visible_with(panel, pts, None)
}

/// Pixel x of each point's x value (NaN where it has none on this axis):
/// curves on one grid share it (`visible_with`), a logarithm less per point.
pub(super) fn x_pixels(panel: &Panel, pts: &[(f64, f64)]) -> Vec<f64> {
    let sx = panel.x.scale();
    let w = (panel.x1 - panel.x0) as f64;
    pts.iter()
        .map(|&(x, _)| {
            if x.is_finite() && (!panel.x.log || x > 0.0) {
                panel.x0 as f64 + sx.t(x) * w
            } else {
                f64::NAN
            }
        })
        .collect()
}

/// [`visible`], with the points' pixel x given (`x_pixels` of the same
/// x values) or computed.
pub(super) fn visible_with(
    panel: &Panel,
    pts: &[(f64, f64)],
    xpx: Option<&[f64]>,
) -> Vec<Vec<(f64, f64)>> {
    let r = (
        panel.x0 as f64,
        panel.y0 as f64,
        panel.x1 as f64,
        panel.y1 as f64,
    );
    let (sx, sy) = (panel.x.scale(), panel.y.scale());
    let (w, h) = ((panel.x1 - panel.x0) as f64, (panel.y1 - panel.y0) as f64);
    // each point mapped once (the same arithmetic as Panel::px)
    let map = |i: usize| {
        let (x, y) = pts[i];
        let ok = x.is_finite()
            && y.is_finite()
            && (!panel.x.log || x > 0.0)
            && (!panel.y.log || y > 0.0);
        let px = match xpx {
            Some(v) => v.get(i).copied().unwrap_or(f64::NAN),
            None => r.0 + sx.t(x) * w,
        };
        (ok && px.is_finite()).then(|| (px, r.3 - sy.t(y) * h))
    };
    let inside = |p: (f64, f64)| p.0 >= r.0 && p.0 <= r.2 && p.1 >= r.1 && p.1 <= r.3;
    let mut lines: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut cur: Vec<(f64, f64)> = Vec::new();
    let mut prev = if pts.is_empty() { None } else { map(0) };
    for i in 1..pts.len() {
        let next = map(i);
        let (Some(a), Some(b)) = (prev, next) else {
            if cur.len() > 1 {
                lines.push(std::mem::take(&mut cur));
            }
            cur.clear();
            prev = next;
            continue;
        };
        prev = next;
        let seg = if inside(a) && inside(b) {
            Some((a, b))
        } else {
            clip(a, b, r)
        };
        match seg {
            Some((c, d)) => {
                let joined = cur
                    .last()
                    .is_some_and(|l| (l.0 - c.0).abs() < 1e-6 && (l.1 - c.1).abs() < 1e-6);
                if !joined {
                    if cur.len() > 1 {
                        lines.push(std::mem::take(&mut cur));
                    }
                    cur.clear();
                    cur.push(c);
                }
                cur.push(d);
            }
            None => {
                if cur.len() > 1 {
                    lines.push(std::mem::take(&mut cur));
                }
                cur.clear();
            }
        }
    }
    if cur.len() > 1 {
        lines.push(cur);
    }
    lines
}

pub(super) fn finite_range(vals: impl Iterator<Item = f64>, positive: bool) -> Option<(f64, f64)> {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for v in vals {
        if v.is_finite() && (!positive || v > 0.0) {
            // v is finite: plain comparisons (wasm calls a function for f64::min/max)
            if v < lo {
                lo = v;
            }
            if v > hi {
                hi = v;
            }
        }
    }
    (lo <= hi).then_some((lo, hi))
}

pub(super) fn pad(lo: f64, hi: f64, log: bool) -> (f64, f64) {
    if log {
        if hi <= lo {
            return (lo / 2.0, hi * 2.0);
        }
        return (lo / (hi / lo).powf(0.04), hi * (hi / lo).powf(0.04));
    }
    if hi <= lo {
        let d = if lo == 0.0 { 1.0 } else { lo.abs() * 0.1 };
        return (lo - d, hi + d);
    }
    let d = (hi - lo) * 0.05;
    (lo - d, hi + d)
}

pub(super) fn x_axis(spec: &PlotSpec, curves: &[&Curve]) -> Result<Axis> {
    let log = spec.x_log;
    let (lo, hi) = match spec.x_range {
        Some([a, b]) if a < b && (!log || a > 0.0) => (a, b),
        Some(_) => {
            return Err(
                Error::usage("the x range must be increasing (and positive on a log axis)")
                    .field("x_range"),
            )
        }
        None => finite_range(curves.iter().flat_map(|c| c.freqs.iter().copied()), log)
            .ok_or_else(|| Error::missing("nothing to plot: no frequencies"))?,
    };
    let (lo, hi) = if lo == hi { pad(lo, hi, log) } else { (lo, hi) };
    Ok(Axis {
        min: lo,
        max: hi,
        log,
    })
}

pub(super) fn in_x(ax: &Axis, f: f64) -> bool {
    f >= ax.min && f <= ax.max
}

pub(super) fn y_axis(spec_range: Option<[f64; 2]>, vals: Vec<f64>, log: bool, db: bool) -> Axis {
    if let Some([a, b]) = spec_range {
        if a < b && (!log || a > 0.0) {
            return Axis {
                min: a,
                max: b,
                log,
            };
        }
    }
    let (lo, hi) = finite_range(vals.into_iter(), log).unwrap_or((1.0, 10.0));
    let (mut lo, mut hi) = pad(lo, hi, log);
    if db {
        lo = (lo / 10.0).floor() * 10.0;
        hi = (hi / 10.0).ceil() * 10.0;
    }
    Axis {
        min: lo,
        max: hi,
        log,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_readable() {
        assert_eq!(lin_ticks(0.0, 10.0), vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0]);
        let (maj, _) = log_ticks(10.0, 1000.0);
        assert_eq!(maj, vec![10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0]);
        assert_eq!(tick_text(1500.0), "1.5k");
        assert_eq!(tick_text(0.25), "0.25");
    }

    #[test]
    fn clipping_keeps_inside_part() {
        let r = (0.0, 0.0, 10.0, 10.0);
        let (a, b) = clip((-5.0, 5.0), (5.0, 5.0), r).unwrap();
        assert_eq!((a, b), ((0.0, 5.0), (5.0, 5.0)));
        assert!(clip((-5.0, -5.0), (-1.0, -1.0), r).is_none());
    }
}
