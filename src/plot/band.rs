//! A curve's uncertainty as drawn: its 95 % level band (a filled area in
//! the curve's colour, light) and its unreliable lines (the curve drawn
//! again over them in a pale mix of its colour), on the level axes of the
//! bode and magnitude views in dB.
//!
//! The band is reduced per pixel column to its highest upper and lowest
//! lower end, so a band of 100,000 lines costs what the panel's width
//! costs, and no excursion is lost at any zoom (as `envelope.rs` for
//! lines). Ends beyond the panel are clamped to its edge; a lower end of
//! −∞ (the interval reaching zero) reaches the panel's bottom.
//!
//! Not here: where bands come from (`data.rs`, from the workspace's
//! uncertainties), the intervals (`crate::uncertainty::reliability`).

use super::layout::Panel;

/// What a curve carries when its set has an uncertainty: per line the
/// 95 % interval of its level (absolute dB, as the curve's `level`) and
/// whether the line is reliable.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct CurveBand {
    pub(super) lo: Vec<f64>,
    pub(super) hi: Vec<f64>,
    pub(super) reliable: Vec<bool>,
}

/// Alpha of a band's fill (light enough for several overlapping bands and
/// the curves on them to stay readable; common practice).
pub(super) const BAND_ALPHA: f64 = 0.18;

/// Share of white in the pale colour of unreliable lines.
pub(super) const PALE_WHITE: f64 = 0.6;

/// The band's pixel polygons (outline: upper ends left to right, lower
/// ends back), one per run of lines with a finite upper end inside the
/// panel's x range.
pub(super) fn polygons(p: &Panel, freqs: &[f64], band: &CurveBand) -> Vec<Vec<(i32, i32)>> {
    let (top, bottom) = (p.y0 as f64, p.y1 as f64);
    let clamp = |y: f64| y.max(top).min(bottom);
    let mut out = Vec::new();
    // per pixel column: x, highest upper end (smallest y), lowest lower end
    let mut run: Vec<(f64, f64, f64)> = Vec::new();
    let mut flush = |run: &mut Vec<(f64, f64, f64)>| {
        if run.len() > 1 {
            let mut poly: Vec<(i32, i32)> = run
                .iter()
                .map(|q| (q.0.round() as i32, q.1.round() as i32))
                .collect();
            poly.extend(
                run.iter()
                    .rev()
                    .map(|q| (q.0.round() as i32, q.2.round() as i32)),
            );
            out.push(poly);
        }
        run.clear();
    };
    for (k, &f) in freqs.iter().enumerate() {
        let (Some(&lo), Some(&hi)) = (band.lo.get(k), band.hi.get(k)) else {
            break;
        };
        let inside = f.is_finite() && f >= p.x.min && f <= p.x.max && (!p.x.log || f > 0.0);
        if !inside {
            continue;
        }
        if hi.is_nan() || lo.is_nan() {
            flush(&mut run);
            continue;
        }
        let y_of = |v: f64| {
            if v == f64::NEG_INFINITY {
                bottom
            } else if v == f64::INFINITY {
                top
            } else if p.y.log && v <= 0.0 {
                bottom
            } else {
                clamp(p.px(f, v).1)
            }
        };
        let x = p.px(f, p.y.min).0;
        let (yh, yl) = (y_of(hi), y_of(lo));
        match run.last_mut() {
            Some(last) if last.0.floor() == x.floor() => {
                last.1 = last.1.min(yh);
                last.2 = last.2.max(yl);
            }
            _ => run.push((x, yh, yl)),
        }
    }
    flush(&mut run);
    out
}

/// Half-width in px of the interval bar drawn at each line of a line
/// spectrum (its band has nothing between the lines).
pub(super) const BAR_HALF_PX: i32 = 3;

/// For a line spectrum: one bar per visible line with an interval, as the
/// pixel x and the top and bottom y (upper and lower ends, clamped).
pub(super) fn bars(p: &Panel, freqs: &[f64], band: &CurveBand) -> Vec<(i32, i32, i32)> {
    let (top, bottom) = (p.y0 as f64, p.y1 as f64);
    let y_of = |f: f64, v: f64| {
        if v == f64::NEG_INFINITY || (p.y.log && v <= 0.0) {
            bottom
        } else if v == f64::INFINITY {
            top
        } else {
            p.px(f, v).1.max(top).min(bottom)
        }
    };
    freqs
        .iter()
        .zip(band.lo.iter().zip(&band.hi))
        .filter(|(f, (lo, hi))| {
            f.is_finite()
                && **f >= p.x.min
                && **f <= p.x.max
                && (!p.x.log || **f > 0.0)
                && !lo.is_nan()
                && !hi.is_nan()
        })
        .map(|(f, (lo, hi))| {
            (
                p.px(*f, p.y.min).0.round() as i32,
                y_of(*f, *hi).round() as i32,
                y_of(*f, *lo).round() as i32,
            )
        })
        .collect()
}

/// The curve's points kept only where a line is unreliable or next to one
/// (so each unreliable stretch joins its neighbours), NaN elsewhere: the
/// pale overlay drawn over the curve.
pub(super) fn unreliable_points(pts: &[(f64, f64)], reliable: &[bool]) -> Option<Vec<(f64, f64)>> {
    if reliable.iter().all(|r| *r) {
        return None;
    }
    let bad = |k: usize| reliable.get(k).is_some_and(|r| !*r);
    Some(
        pts.iter()
            .enumerate()
            .map(|(k, &q)| {
                let near = bad(k) || (k > 0 && bad(k - 1)) || bad(k + 1);
                if near {
                    q
                } else {
                    (q.0, f64::NAN)
                }
            })
            .collect(),
    )
}

#[cfg(test)]
mod tests {
    use super::super::layout::{Axis, Panel};
    use super::*;

    fn panel() -> Panel {
        Panel {
            x0: 0,
            y0: 0,
            x1: 100,
            y1: 100,
            x: Axis {
                min: 0.0,
                max: 100.0,
                log: false,
            },
            y: Axis {
                min: -50.0,
                max: 50.0,
                log: false,
            },
        }
    }

    #[test]
    fn one_column_per_pixel_with_the_extremes() {
        // 1,000 lines over 100 px: at most one column each, the widest ends kept
        let freqs: Vec<f64> = (0..1000).map(|k| k as f64 * 0.1).collect();
        let lo: Vec<f64> = (0..1000)
            .map(|k| if k == 505 { -40.0 } else { -5.0 })
            .collect();
        let hi: Vec<f64> = (0..1000)
            .map(|k| if k == 507 { 30.0 } else { 5.0 })
            .collect();
        let b = CurveBand {
            lo,
            hi,
            reliable: vec![true; 1000],
        };
        let polys = polygons(&panel(), &freqs, &b);
        assert_eq!(polys.len(), 1);
        let p = &polys[0];
        assert!(p.len() <= 2 * 101, "{}", p.len());
        // column 50 holds lines 500..510: upper end 30 dB (y 20), lower −40 dB (y 90)
        assert!(p.contains(&(50, 20)), "{p:?}");
        assert!(p.contains(&(50, 90)), "{p:?}");
    }

    #[test]
    fn infinite_lower_end_reaches_the_bottom_and_nan_splits() {
        let freqs = vec![10.0, 20.0, 30.0, 40.0, 50.0];
        let b = CurveBand {
            lo: vec![f64::NEG_INFINITY, -1.0, f64::NAN, -1.0, -1.0],
            hi: vec![100.0, 1.0, f64::NAN, 1.0, 1.0],
            reliable: vec![true; 5],
        };
        let polys = polygons(&panel(), &freqs, &b);
        assert_eq!(polys.len(), 2);
        assert_eq!(polys[0][0], (10, 0)); // clamped to the top
        assert_eq!(*polys[0].last().unwrap_or(&(0, 0)), (10, 100)); // −∞: the bottom
    }

    #[test]
    fn a_line_spectrum_gets_one_bar_per_line_with_an_interval() {
        let freqs = vec![10.0, 20.0, 30.0, 200.0];
        let b = CurveBand {
            lo: vec![-10.0, f64::NAN, f64::NEG_INFINITY, 0.0],
            hi: vec![10.0, f64::NAN, 20.0, 1.0],
            reliable: vec![true; 4],
        };
        // 10 Hz: 40..60 px; 20 Hz has none; 30 Hz reaches the bottom; 200 Hz is outside
        assert_eq!(
            bars(&panel(), &freqs, &b),
            vec![(10, 40, 60), (30, 30, 100)]
        );
    }

    #[test]
    fn unreliable_points_join_their_neighbours() {
        let pts: Vec<(f64, f64)> = (0..6).map(|k| (k as f64, 1.0)).collect();
        let got =
            unreliable_points(&pts, &[true, true, true, false, true, true]).unwrap_or_default();
        let kept: Vec<bool> = got.iter().map(|q| q.1.is_finite()).collect();
        assert_eq!(kept, vec![false, false, true, true, true, false]);
        assert!(unreliable_points(&pts, &[true; 6]).is_none());
    }
}
