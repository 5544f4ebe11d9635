//! The time view: a recording's channels against time, one panel each, with
//! the analysis blocks (Welch segments, impact records) as shaded spans.
//!
//! A long record draws fast: each pixel column shows the smallest and the
//! largest sample whose time falls in it (exact, so no peak is lost), and a
//! view holding fewer samples than two per column draws the samples
//! themselves. A zoom is a time range (`range`), drawn again by the core.

use super::diagram::esc;
use super::drawing::{summary_text, Drawing};
use super::layout::tick_text;
use crate::error::{Error, Result};
use crate::signal::Recording;

/// One analysis block: its first sample, its length in samples, and the
/// reason it is left out of the average (a double hit, an overload).
#[derive(Debug, Clone, PartialEq)]
pub struct Block {
    pub start: usize,
    pub len: usize,
    pub flag: Option<String>,
}

/// The segments Welch averaging cuts from `samples` samples: `segment`
/// long, one every `step` samples, whole segments only.
pub fn welch_blocks(samples: usize, segment: usize, step: usize) -> Vec<Block> {
    if segment == 0 || step == 0 || samples < segment {
        return Vec::new();
    }
    (0..=(samples - segment) / step)
        .map(|k| Block {
            start: k * step,
            len: segment,
            flag: None,
        })
        .collect()
}

/// Smallest and largest drawing size, pixels.
const MIN_SIZE: [f64; 2] = [200.0, 120.0];
const MAX_SIZE: [f64; 2] = [8000.0, 8000.0];
const LEFT: f64 = 78.0;
const RIGHT: f64 = 14.0;
const TOP: f64 = 26.0;
const BOTTOM: f64 = 34.0;
const GAP: f64 = 14.0;
/// Trace colours (dark enough for WCAG 2.1 3:1 on white, as the palette).
const TRACE: [&str; 4] = ["#1f4e99", "#8a3b00", "#1d6b38", "#6b2d8a"];

/// Per pixel column `c` of `columns` spanning samples `[i0, i1)` (sample
/// times `i / fs`, the view `[t0, t1]`): the smallest and largest sample
/// whose time falls in the column, `None` for a column with no sample.
pub fn column_extremes(
    samples: &[f64],
    fs: f64,
    t0: f64,
    t1: f64,
    columns: usize,
) -> Vec<Option<(f64, f64)>> {
    let per = (t1 - t0) / columns as f64;
    let n = samples.len();
    // first sample at or after time t, clamped to the record
    let at = |t: f64| -> usize {
        let i = (t * fs).ceil();
        if i <= 0.0 {
            0
        } else if i >= n as f64 {
            n
        } else {
            i as usize
        }
    };
    (0..columns)
        .map(|c| {
            let a = at(t0 + c as f64 * per);
            let b = if c + 1 == columns {
                // the last column includes its right edge
                at(t1).max(((t1 * fs).floor() + 1.0).clamp(0.0, n as f64) as usize)
            } else {
                at(t0 + (c + 1) as f64 * per)
            };
            samples.get(a..b.max(a)).and_then(|s| {
                s.iter().fold(None, |acc: Option<(f64, f64)>, &v| {
                    if !v.is_finite() {
                        return acc;
                    }
                    Some(acc.map_or((v, v), |(lo, hi)| (lo.min(v), hi.max(v))))
                })
            })
        })
        .collect()
}

fn nice_ticks(lo: f64, hi: f64, want: usize) -> Vec<f64> {
    let span = hi - lo;
    if !(span.is_finite() && span > 0.0) {
        return vec![lo];
    }
    let raw = span / want.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|k| k as f64 * step).collect()
}

/// The SVG of the recording `rec` (named `name`) between `range` seconds
/// (the whole record when `None`), `blocks` shaded, `width` × `height` px.
pub fn time_view_svg(
    name: &str,
    rec: &Recording,
    range: Option<[f64; 2]>,
    blocks: &[Block],
    width: f64,
    height: f64,
) -> Result<Drawing> {
    for (v, lo, hi, what) in [
        (width, MIN_SIZE[0], MAX_SIZE[0], "width"),
        (height, MIN_SIZE[1], MAX_SIZE[1], "height"),
    ] {
        if !(v.is_finite() && (lo..=hi).contains(&v)) {
            return Err(Error::usage(format!(
                "the time view's {what} is {v} px; expected {lo} to {hi}"
            ))
            .field(what));
        }
    }
    let n = rec.len();
    if n == 0 || rec.channels.is_empty() {
        return Err(Error::usage("the recording holds no samples").field("recording"));
    }
    let end = (n - 1) as f64 / rec.fs;
    let [t0, t1] = match range {
        None => [0.0, end.max(1.0 / rec.fs)],
        Some([a, b]) => {
            if !(a.is_finite() && b.is_finite() && a < b) {
                return Err(Error::usage(format!(
                    "time range [{a}, {b}] s; expected two increasing times"
                ))
                .field("range"));
            }
            [a, b]
        }
    };
    let pw = (width - LEFT - RIGHT).floor().max(1.0);
    let columns = pw as usize;
    let nch = rec.channels.len();
    let ph = ((height - TOP - BOTTOM - GAP * (nch - 1) as f64) / nch as f64).max(8.0);
    let x_of = |t: f64| LEFT + (t - t0) / (t1 - t0) * pw;
    let mut svg = String::new();
    svg.push_str(&format!(
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" viewBox="0 0 {width} {height}" font-family="sans-serif" font-size="11" role="img">"#
    ));
    let mut summary = format!(
        "Time view of {name}: {nch} channel(s), {n} samples at {} Hz, shown from {} s to {} s",
        rec.fs,
        tick_text(t0),
        tick_text(t1)
    );
    svg.push_str(&format!(
        r#"<title>{}</title>"#,
        esc(&format!("time view of {name}"))
    ));
    svg.push_str(r##"<rect x="0" y="0" width="100%" height="100%" fill="#ffffff"/>"##);
    // blocks in view: lanes above the panels, shading in them
    let visible: Vec<(usize, &Block)> = blocks
        .iter()
        .enumerate()
        .filter(|(_, b)| {
            let a = b.start as f64 / rec.fs;
            let e = (b.start + b.len) as f64 / rec.fs;
            e > t0 && a < t1
        })
        .collect();
    let flagged = blocks.iter().filter(|b| b.flag.is_some()).count();
    if !blocks.is_empty() {
        summary.push_str(&format!(
            "; {} analysis block(s) of {} samples{}",
            blocks.len(),
            blocks[0].len,
            if flagged > 0 {
                format!(", {flagged} left out (marked)")
            } else {
                String::new()
            }
        ));
    }
    let clip = |t: f64| x_of(t.clamp(t0, t1));
    let panels_bottom = TOP + nch as f64 * ph + (nch - 1) as f64 * GAP;
    for (k, b) in &visible {
        let xa = clip(b.start as f64 / rec.fs);
        let xb = clip((b.start + b.len) as f64 / rec.fs);
        let lane = (k % 2) as f64;
        let (fill, dash) = match b.flag {
            Some(_) => ("#b3261e", r##" stroke="#b3261e" stroke-dasharray="3 2""##),
            None => ("#5a6b7d", ""),
        };
        svg.push_str(&format!(
            r#"<rect class="block{}" x="{xa:.2}" y="{:.2}" width="{:.2}" height="5" fill="{fill}"{dash}><title>{}</title></rect>"#,
            if b.flag.is_some() { " flagged" } else { "" },
            6.0 + lane * 7.0,
            (xb - xa).max(0.5),
            esc(&format!(
                "block {}: {} s to {} s{}",
                k + 1,
                tick_text(b.start as f64 / rec.fs),
                tick_text((b.start + b.len) as f64 / rec.fs),
                b.flag.as_deref().map(|f| format!(", left out: {f}")).unwrap_or_default()
            ))
        ));
        if k % 2 == 0 || b.flag.is_some() {
            svg.push_str(&format!(
                r#"<rect x="{xa:.2}" y="{TOP}" width="{:.2}" height="{:.2}" fill="{fill}" fill-opacity="{}"/>"#,
                (xb - xa).max(0.5),
                panels_bottom - TOP,
                if b.flag.is_some() { 0.16 } else { 0.08 }
            ));
        }
    }
    for (c, (ch, samples)) in rec.channels.iter().zip(&rec.samples).enumerate() {
        let top = TOP + c as f64 * (ph + GAP);
        let cols = column_extremes(samples, rec.fs, t0, t1, columns);
        let (lo, hi) = cols
            .iter()
            .flatten()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &(l, h)| {
                (a.min(l), b.max(h))
            });
        let (lo, hi) = if !(lo.is_finite() && hi.is_finite()) {
            (-1.0, 1.0)
        } else if hi > lo {
            let pad = 0.05 * (hi - lo);
            (lo - pad, hi + pad)
        } else {
            (
                lo - 1.0_f64.max(lo.abs() * 0.1),
                hi + 1.0_f64.max(hi.abs() * 0.1),
            )
        };
        let y_of = |v: f64| top + ph - (v - lo) / (hi - lo) * ph;
        svg.push_str(&format!(
            r##"<rect x="{LEFT}" y="{top:.2}" width="{pw}" height="{ph:.2}" fill="none" stroke="#595959"/>"##
        ));
        for v in nice_ticks(lo, hi, ((ph / 30.0) as usize).max(2)) {
            let y = y_of(v);
            svg.push_str(&format!(
                r##"<line x1="{:.2}" y1="{y:.2}" x2="{LEFT}" y2="{y:.2}" stroke="#595959"/><text x="{:.2}" y="{:.2}" text-anchor="end" fill="#222222">{}</text>"##,
                LEFT - 4.0,
                LEFT - 6.0,
                y + 4.0,
                esc(&tick_text(v))
            ));
        }
        // the trace: a sample polyline when zoomed in, else min/max per column
        let i0 = ((t0 * rec.fs).floor().max(0.0) as usize).min(samples.len());
        let i1 = (((t1 * rec.fs).ceil() + 1.0).max(0.0) as usize).min(samples.len());
        let mut d = String::new();
        let mut pen = false;
        if i1 > i0 && (i1 - i0) <= 2 * columns {
            for (i, v) in samples[i0..i1].iter().enumerate() {
                if !v.is_finite() {
                    pen = false;
                    continue;
                }
                let x = x_of((i0 + i) as f64 / rec.fs);
                d.push_str(&format!(
                    "{}{x:.2} {:.2}",
                    if pen { "L" } else { "M" },
                    y_of(*v)
                ));
                pen = true;
            }
        } else {
            for (k, col) in cols.iter().enumerate() {
                let Some((l, h)) = col else {
                    pen = false;
                    continue;
                };
                let x = LEFT + k as f64 + 0.5;
                d.push_str(&format!(
                    "{}{x:.2} {:.2}L{x:.2} {:.2}",
                    if pen { "L" } else { "M" },
                    y_of(*h),
                    y_of(*l) + if h == l { 0.5 } else { 0.0 }
                ));
                pen = true;
            }
        }
        svg.push_str(&format!(
            r#"<path class="trace" data-channel="{}" d="{d}" fill="none" stroke="{}" stroke-width="1.2" clip-path="none"/>"#,
            esc(&ch.dof.to_string()),
            TRACE[c % TRACE.len()]
        ));
        // the channel's name over its trace, on a white ground
        let unit = ch.quantity.si_unit(ch.dof.dir.is_rotational());
        let label = format!("{} {} [{unit}]", ch.dof, ch.quantity.name());
        svg.push_str(&format!(
            r##"<rect x="{:.2}" y="{:.2}" width="{:.2}" height="15" fill="#ffffff" fill-opacity="0.85"/><text x="{:.2}" y="{:.2}" fill="#222222" font-weight="bold">{}</text>"##,
            LEFT + 1.0,
            top + 1.0,
            (label.chars().count() as f64 * 6.6 + 8.0).min(pw - 2.0),
            LEFT + 4.0,
            top + 12.0,
            esc(&label)
        ));
    }
    for t in nice_ticks(t0, t1, ((pw / 90.0) as usize).max(2)) {
        let x = x_of(t);
        svg.push_str(&format!(
            r##"<line x1="{x:.2}" y1="{panels_bottom:.2}" x2="{x:.2}" y2="{:.2}" stroke="#595959"/><text x="{x:.2}" y="{:.2}" text-anchor="middle" fill="#222222">{}</text>"##,
            panels_bottom + 4.0,
            panels_bottom + 16.0,
            esc(&tick_text(t))
        ));
    }
    svg.push_str(&format!(
        r##"<text x="{:.2}" y="{:.2}" text-anchor="middle" fill="#222222">time [s]</text>"##,
        LEFT + pw / 2.0,
        panels_bottom + 30.0
    ));
    let summary = summary_text(&summary);
    svg.push_str(&format!("<desc>{}</desc></svg>", esc(&summary)));
    Ok(Drawing {
        svg,
        width,
        height,
        summary,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;
    use crate::signal::Channel;
    use crate::units::Quantity;

    /// The per-column extremes equal a brute-force scan of every sample
    /// whose time falls in the column (common practice: a min/max envelope
    /// is exact when every sample is assigned to one column).
    #[test]
    fn column_extremes_match_a_scan_of_every_sample() {
        let fs = 1000.0;
        let x: Vec<f64> = (0..10_007)
            .map(|i| ((i as f64) * 0.37).sin() * (1.0 + (i % 13) as f64))
            .collect();
        let (t0, t1, cols) = (1.2345, 8.765, 333);
        let got = column_extremes(&x, fs, t0, t1, cols);
        let per = (t1 - t0) / cols as f64;
        let mut seen = 0;
        for (c, g) in got.iter().enumerate() {
            let a = t0 + c as f64 * per;
            let b = t0 + (c + 1) as f64 * per;
            let want = x
                .iter()
                .enumerate()
                .filter(|(i, _)| {
                    let t = *i as f64 / fs;
                    t >= a && (t < b || (c + 1 == cols && t <= b))
                })
                .fold(None, |acc: Option<(f64, f64)>, (_, &v)| {
                    Some(acc.map_or((v, v), |(l, h)| (l.min(v), h.max(v))))
                });
            seen += usize::from(want.is_some());
            assert_eq!(*g, want, "column {c}");
        }
        assert_eq!(seen, cols);
    }

    #[test]
    fn welch_blocks_are_whole_segments() {
        // scipy.signal.welch cuts (n - nperseg) // step + 1 segments
        let b = welch_blocks(10_000, 1024, 512);
        assert_eq!(b.len(), (10_000 - 1024) / 512 + 1);
        assert_eq!(b.last().map(|b| b.start + b.len), Some(17 * 512 + 1024));
        assert!(welch_blocks(100, 1024, 512).is_empty());
    }

    #[test]
    fn the_view_draws_each_channel_and_the_blocks() {
        let fs = 100.0;
        let rec = Recording {
            fs,
            channels: vec![
                Channel {
                    dof: Dof::parse("rig:1+Z", "").unwrap(),
                    quantity: Quantity::Force,
                },
                Channel {
                    dof: Dof::parse("rig:2+Z", "").unwrap(),
                    quantity: Quantity::Acceleration,
                },
            ],
            samples: vec![vec![0.5; 1000], (0..1000).map(|i| i as f64).collect()],
        };
        let blocks = welch_blocks(1000, 200, 100);
        let d = time_view_svg("bench.wav", &rec, None, &blocks, 640.0, 300.0).unwrap();
        assert_eq!(d.svg.matches("class=\"trace\"").count(), 2);
        assert_eq!(d.svg.matches("class=\"block").count(), blocks.len());
        assert!(d.summary.contains("9 analysis block(s)"), "{}", d.summary);
        crate::plot::fixtures::well_formed(&d.svg);
        let zoom =
            time_view_svg("bench.wav", &rec, Some([2.0, 2.5]), &blocks, 640.0, 300.0).unwrap();
        // 51 samples in view: drawn one by one
        let path = zoom.svg.split("class=\"trace\"").nth(2).unwrap_or("");
        assert!(path.matches('L').count() >= 50);
        assert!(time_view_svg("x", &rec, Some([3.0, 1.0]), &[], 640.0, 300.0).is_err());
    }
}
