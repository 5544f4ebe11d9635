//! Per-pixel-column decimation of a curve's pixel polyline: of the points
//! that fall in one pixel column (x rounded down), only the first, the
//! lowest, the highest and the last are kept, in their order along the
//! curve. What a column shows is then the same (the vertical extent
//! between its lowest and highest point, and the segments into the
//! neighbouring columns, which join the same first and last points), so no
//! peak is lost at any zoom level, while a curve of 100,000 lines is drawn
//! with at most four points per column of the panel.
//!
//! Both backends (the page's canvas and the SVG export) draw the reduced
//! polyline, so they show the same thing.
//!
//! Not here: clipping and the mapping to pixels (`layout.rs`).

#[cfg(test)]
use super::layout::visible;
use super::layout::{visible_with, Panel};

/// The visible part of a curve (points in axis values) as pixel
/// polylines, each reduced per pixel column; `xpx` the points' pixel x when
/// known (`layout::x_pixels`).
pub(super) fn pixel_polylines(
    panel: &Panel,
    pts: &[(f64, f64)],
    xpx: Option<&[f64]>,
) -> Vec<Vec<(f64, f64)>> {
    visible_with(panel, pts, xpx)
        .into_iter()
        .map(|l| super::simplify::simplify(&reduce(&l), super::simplify::TOLERANCE_PX))
        .collect()
}

/// Keep the first, lowest, highest and last point of each pixel column, in
/// their order along the line. Lines with no column holding more than four
/// points come back unchanged.
pub(super) fn reduce(line: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut out = Vec::with_capacity(line.len().min(4096));
    let mut start = 0;
    while start < line.len() {
        let col = line[start].0.floor();
        let mut end = start + 1;
        while end < line.len() && line[end].0.floor() == col {
            end += 1;
        }
        let run = &line[start..end];
        if run.len() <= 4 {
            out.extend_from_slice(run);
        } else {
            // pixel y grows downwards: the highest point has the smallest y
            let (mut lo, mut hi) = (0, 0);
            for (k, p) in run.iter().enumerate() {
                if p.1 > run[lo].1 {
                    lo = k;
                }
                if p.1 < run[hi].1 {
                    hi = k;
                }
            }
            let mut keep = [0, lo.min(hi), lo.max(hi), run.len() - 1];
            keep.sort_unstable();
            let mut last = usize::MAX;
            for k in keep {
                if k != last {
                    out.push(run[k]);
                    last = k;
                }
            }
        }
        start = end;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::super::layout::Axis;
    use super::*;

    /// A deterministic pseudo-random sequence (xorshift64) in [0, 1).
    fn noise(n: usize, mut s: u64) -> Vec<f64> {
        (0..n)
            .map(|_| {
                s ^= s << 13;
                s ^= s >> 7;
                s ^= s << 17;
                (s >> 11) as f64 / (1u64 << 53) as f64
            })
            .collect()
    }

    /// Highest and lowest pixel y of the points in each column, over lines.
    fn columns(lines: &[Vec<(f64, f64)>]) -> std::collections::BTreeMap<i64, (f64, f64)> {
        let mut m = std::collections::BTreeMap::new();
        for l in lines {
            for p in l {
                let e = m
                    .entry(p.0.floor() as i64)
                    .or_insert((f64::INFINITY, f64::NEG_INFINITY));
                e.0 = e.0.min(p.1);
                e.1 = e.1.max(p.1);
            }
        }
        m
    }

    fn panel(x: (f64, f64), log: bool, y: (f64, f64)) -> Panel {
        Panel {
            x0: 84,
            y0: 14,
            x1: 1382,
            y1: 500,
            x: Axis {
                min: x.0,
                max: x.1,
                log,
            },
            y: Axis {
                min: y.0,
                max: y.1,
                log: false,
            },
        }
    }

    #[test]
    fn each_column_keeps_its_extremes_and_ends() {
        let ys = noise(50_000, 7);
        let line: Vec<(f64, f64)> = ys
            .iter()
            .enumerate()
            .map(|(i, y)| (i as f64 * 0.013, 100.0 * y))
            .collect();
        let r = reduce(&line);
        assert!(r.len() < line.len() / 10, "{} of {}", r.len(), line.len());
        assert_eq!(
            columns(std::slice::from_ref(&line)),
            columns(std::slice::from_ref(&r))
        );
        assert_eq!(r.first(), line.first());
        assert_eq!(r.last(), line.last());
        // points stay in the order of the curve
        assert!(r.windows(2).all(|w| w[0].0 <= w[1].0));
        // short runs are left alone
        let few = vec![(0.1, 1.0), (0.2, 3.0), (1.5, 2.0)];
        assert_eq!(reduce(&few), few);
    }

    #[test]
    fn a_one_line_peak_of_a_100000_line_curve_stays_at_every_zoom() {
        // 100,000 lines from 1 Hz to 10 kHz, noise of ±1 dB around 0 dB and one
        // line at +40 dB: the plotted maximum of every pixel column equals the
        // data's maximum there, at full range and zoomed in, linear and log.
        let n = 100_000;
        let f: Vec<f64> = (0..n)
            .map(|i| 1.0 + i as f64 * (9999.0 / (n - 1) as f64))
            .collect();
        let mut y: Vec<f64> = noise(n, 3).iter().map(|v| 2.0 * v - 1.0).collect();
        let k = 61_803;
        y[k] = 40.0;
        let pts: Vec<(f64, f64)> = f.iter().copied().zip(y.iter().copied()).collect();
        let fp = f[k];
        for (range, log) in [
            ((1.0, 10_000.0), false),
            ((1.0, 10_000.0), true),
            ((fp - 500.0, fp + 500.0), false),
            ((fp - 5.0, fp + 5.0), true),
            ((fp - 0.5, fp + 0.5), false),
        ] {
            let p = panel(range, log, (-10.0, 50.0));
            let drawn = pixel_polylines(&p, &pts, None);
            let xs = super::super::layout::x_pixels(&p, &pts);
            assert_eq!(drawn, pixel_polylines(&p, &pts, Some(&xs)));
            let full = visible(&p, &pts);
            // the per-column stage keeps every column's extremes exactly
            let reduced: Vec<Vec<(f64, f64)>> = full.iter().map(|l| reduce(l)).collect();
            assert_eq!(columns(&reduced), columns(&full), "{range:?} log {log}");
            // what is drawn is that, less the points within 0.3 px of it
            // (simplify.rs); a one-line peak is no such point
            // the peak's own column reaches the peak's pixel height
            let (px, py) = p.px(fp, 40.0);
            let top = columns(&drawn)[&(px.floor() as i64)].0;
            assert!((top - py).abs() < 1e-9, "{range:?}: {top} vs {py}");
            // and the drawing is at most four points a column
            let cols = (p.x1 - p.x0 + 2) as usize;
            let count: usize = drawn.iter().map(|l| l.len()).sum();
            assert!(count <= 4 * cols + 2 * drawn.len(), "{count} points");
        }
    }
}
