//! Order tracks of rotating machines: a channel resampled to constant angle
//! increments, then one order's amplitude per block of revolutions.
//!
//! - **angle** θ(t) in revolutions, from a speed profile (time, rpm) points,
//!   the speed linear between them and θ its exact integral; or from a
//!   tachometer channel: each rising crossing of `level` (time interpolated
//!   linearly between samples) is 1/`pulses_per_rev` revolution further, the
//!   speed constant between pulses;
//! - **resampling**: `samples_per_rev` samples per revolution, each at the
//!   time where θ reaches it (θ inverted linearly between samples), the
//!   channel interpolated there by a cubic (Catmull–Rom) through the four
//!   nearest samples;
//! - **blocks** of `revolutions` revolutions, one after another (no
//!   overlap), Hann-windowed; the order `o` is line o·`revolutions` of the
//!   block's DFT, its peak amplitude 2|X|/Σw, its phase referred to θ = 0
//!   (e^{+iωt}: the component is Re(A e^{i 2π o θ}));
//! - the result is a peak spectrum set whose lines are the order's frequency
//!   o·rpm/60 at each block's mean speed (revolutions / block duration): a
//!   run-up or run-down becomes an excitation over frequency. The speed must
//!   change monotonically across blocks (lines strictly increasing once
//!   sorted); `o·revolutions` must be a whole number (the order on a line).

use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet, Provenance, SignalKind};
use crate::units::Quantity;
use num_complex::Complex64;
use rustfft::FftPlanner;

/// Where the angle comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum Speed {
    /// (time s, rpm) points, times increasing.
    Profile(Vec<(f64, f64)>),
    /// A tachometer channel's samples, its trigger level and pulses per revolution.
    Tach {
        samples: Vec<f64>,
        level: f64,
        pulses_per_rev: f64,
    },
}

/// The tracking choices.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OrderSettings {
    pub order: f64,
    pub revolutions: usize,
    pub samples_per_rev: usize,
}

/// A speed profile written `TIME:RPM, ...` (e.g. `0:600, 20:3600`), as
/// `mortise orders --speed` and the page take it; checked by [`angle`].
pub fn parse_profile(text: &str) -> Result<Vec<(f64, f64)>> {
    text.split(',')
        .map(|p| {
            let bad = || {
                Error::usage(format!(
                    "'{}' is not TIME:RPM (e.g. '0:600,20:3600')",
                    crate::error::quote(p)
                ))
                .field("speed")
            };
            let (t, r) = p.split_once(':').ok_or_else(bad)?;
            Ok((
                t.trim().parse::<f64>().map_err(|_| bad())?,
                r.trim().parse::<f64>().map_err(|_| bad())?,
            ))
        })
        .collect()
}

/// θ in revolutions at every sample time (NaN where the speed source does
/// not cover it).
pub fn angle(speed: &Speed, n: usize, fs: f64) -> Result<Vec<f64>> {
    match speed {
        Speed::Profile(p) => {
            if p.len() < 2 {
                return Err(
                    Error::usage("a speed profile needs at least two (time, rpm) points")
                        .field("speed"),
                );
            }
            for w in p.windows(2) {
                if w[1].0 <= w[0].0 || w[1].0.is_nan() {
                    return Err(Error::usage(format!(
                        "speed profile times {} s then {} s; expected increasing times",
                        w[0].0, w[1].0
                    ))
                    .field("speed"));
                }
            }
            if let Some(&(t, r)) = p
                .iter()
                .find(|(t, r)| !(t.is_finite() && r.is_finite() && *r > 0.0))
            {
                return Err(Error::usage(format!(
                    "speed {r} rpm at {t} s; expected a positive speed"
                ))
                .field("speed"));
            }
            // θ at each knot (exact for a speed linear between knots)
            let mut th = vec![0.0; p.len()];
            for j in 1..p.len() {
                th[j] = th[j - 1] + 0.5 * (p[j].1 + p[j - 1].1) / 60.0 * (p[j].0 - p[j - 1].0);
            }
            let mut j = 0;
            Ok((0..n)
                .map(|i| {
                    let t = i as f64 / fs;
                    if t < p[0].0 || t > p[p.len() - 1].0 {
                        return f64::NAN;
                    }
                    while j + 1 < p.len() - 1 && t > p[j + 1].0 {
                        j += 1;
                    }
                    let dt = t - p[j].0;
                    let r0 = p[j].1 / 60.0;
                    let slope = (p[j + 1].1 - p[j].1) / 60.0 / (p[j + 1].0 - p[j].0);
                    th[j] + r0 * dt + 0.5 * slope * dt * dt
                })
                .collect())
        }
        Speed::Tach {
            samples,
            level,
            pulses_per_rev,
        } => {
            if !(pulses_per_rev.is_finite() && *pulses_per_rev > 0.0) {
                return Err(Error::usage(format!(
                    "{pulses_per_rev} pulses per revolution; expected a positive number"
                ))
                .field("pulses per revolution"));
            }
            let mut pulses = Vec::new();
            for i in 1..samples.len() {
                let (a, b) = (samples[i - 1], samples[i]);
                if a < *level && b >= *level {
                    pulses.push((i - 1) as f64 + (level - a) / (b - a));
                }
            }
            if pulses.len() < 2 {
                return Err(Error::usage(format!(
                    "{} tachometer pulse(s) cross {level}; expected at least two",
                    pulses.len()
                ))
                .field("tach"));
            }
            let mut m = 0;
            Ok((0..n)
                .map(|i| {
                    let x = i as f64;
                    if x < pulses[0] || x > pulses[pulses.len() - 1] {
                        return f64::NAN;
                    }
                    while m + 1 < pulses.len() - 1 && x > pulses[m + 1] {
                        m += 1;
                    }
                    (m as f64 + (x - pulses[m]) / (pulses[m + 1] - pulses[m])) / pulses_per_rev
                })
                .collect())
        }
    }
}

fn catmull_rom(x: &[f64], u: f64) -> f64 {
    let n = x.len() as isize;
    let i = u.floor() as isize;
    let f = u - i as f64;
    let at = |k: isize| x[k.clamp(0, n - 1) as usize];
    let (p0, p1, p2, p3) = (at(i - 1), at(i), at(i + 1), at(i + 2));
    p1 + 0.5
        * f
        * (p2 - p0 + f * (2.0 * p0 - 5.0 * p1 + 4.0 * p2 - p3 + f * (3.0 * (p1 - p2) + p3 - p0)))
}

/// The order track of `x` (one channel, SI) at `dof`.
#[allow(clippy::too_many_arguments)]
pub fn order_track(
    x: &[f64],
    fs: f64,
    dof: &Dof,
    quantity: Quantity,
    speed: &Speed,
    s: &OrderSettings,
    name: &str,
    source: &Provenance,
) -> Result<FrfSet> {
    if !(s.order.is_finite() && s.order > 0.0) {
        return Err(
            Error::usage(format!("order {}; expected a positive number", s.order)).field("order"),
        );
    }
    let line = s.order * s.revolutions as f64;
    if (line - line.round()).abs() > 1e-9 || s.revolutions == 0 {
        return Err(Error::usage(format!(
            "order {} times {} revolutions per block is not a whole number: the order would fall between lines; choose revolutions so it is",
            s.order, s.revolutions
        ))
        .field("revolutions"));
    }
    // sizes from a recipe, the page or the command line: checked before
    // they drive the resampling buffer and the block loop
    if s.samples_per_rev < 4 {
        return Err(Error::usage(format!(
            "{} samples per revolution; expected 4 or more (the order must lie below half of them)",
            s.samples_per_rev
        ))
        .field("samples per revolution"));
    }
    let nb = match s.revolutions.checked_mul(s.samples_per_rev) {
        Some(nb) if nb <= x.len() => nb,
        _ => {
            return Err(Error::usage(format!(
                "a block of {} revolutions × {} samples per revolution is longer than the recording's {} samples",
                s.revolutions,
                s.samples_per_rev,
                x.len()
            ))
            .field("revolutions"))
        }
    };
    let k = line.round() as usize;
    if k >= nb / 2 {
        return Err(Error::usage(format!(
            "order {} needs more than {} samples per revolution (at most order {} is resolved)",
            s.order,
            s.samples_per_rev,
            s.samples_per_rev / 2 - 1
        ))
        .field("samples per revolution"));
    }
    let th = angle(speed, x.len(), fs)?;
    // covered range
    let first = th.iter().position(|v| v.is_finite());
    let last = th.iter().rposition(|v| v.is_finite());
    let (Some(a), Some(b)) = (first, last) else {
        return Err(Error::usage("the speed does not cover the recording").field("speed"));
    };
    for i in a + 1..=b {
        if th[i] <= th[i - 1] || th[i].is_nan() {
            return Err(Error::usage(format!(
                "the angle does not increase at {} s (speed zero or a tachometer glitch)",
                i as f64 / fs
            ))
            .field("speed"));
        }
    }
    let step = 1.0 / s.samples_per_rev as f64;
    let start_rev = (th[a] / step).ceil() * step;
    let w: Vec<f64> = (0..nb)
        .map(|i| 0.5 - 0.5 * (2.0 * std::f64::consts::PI * i as f64 / nb as f64).cos())
        .collect();
    let sw: f64 = w.iter().sum();
    let fft = FftPlanner::new().plan_fft_forward(nb);
    let mut lines: Vec<(f64, Complex64, f64)> = Vec::new();
    let mut idx = a;
    let mut block_start = start_rev;
    'blocks: loop {
        let mut buf = Vec::with_capacity(nb);
        let mut t0 = f64::NAN;
        let mut t1 = f64::NAN;
        for (j, wj) in w.iter().enumerate() {
            let target = block_start + j as f64 * step;
            while idx < b && th[idx + 1] < target {
                idx += 1;
            }
            if idx >= b || th[idx] > target {
                break 'blocks;
            }
            let u = idx as f64 + (target - th[idx]) / (th[idx + 1] - th[idx]);
            if j == 0 {
                t0 = u / fs;
            }
            t1 = u / fs;
            buf.push(Complex64::new(catmull_rom(x, u) * wj, 0.0));
        }
        fft.process(&mut buf);
        // the block spans revolutions·(nb−1)/nb revolutions between its first and last sample
        let rpm = 60.0 * (nb - 1) as f64 * step / (t1 - t0);
        let phase = Complex64::from_polar(1.0, -2.0 * std::f64::consts::PI * s.order * block_start);
        lines.push((s.order * rpm / 60.0, buf[k] * (2.0 / sw) * phase, rpm));
        block_start += s.revolutions as f64;
    }
    if lines.is_empty() {
        return Err(Error::usage(format!(
            "the recording covers fewer than {} revolutions, one block",
            s.revolutions
        ))
        .field("revolutions"));
    }
    // a run-up or a run-down: block speeds strictly monotonic
    let up = lines.windows(2).all(|w| w[1].0 > w[0].0);
    let down = lines.windows(2).all(|w| w[1].0 < w[0].0);
    if !(up || down) {
        let turn = lines
            .windows(3)
            .find(|w| (w[1].0 - w[0].0) * (w[2].0 - w[1].0) <= 0.0)
            .map_or(lines[0].2, |w| w[1].2);
        return Err(Error::usage(format!(
            "the speed does not change monotonically (it turns near {turn:.1} rpm); track a run-up or a run-down"
        ))
        .field("speed"));
    }
    if down {
        lines.reverse();
    }
    let mut set = FrfSet::zeros(
        name,
        lines.iter().map(|l| l.0).collect(),
        vec![dof.clone()],
        vec![Dof::scalar("", "ref")],
        quantity,
        Quantity::Dimensionless,
    );
    for (i, l) in lines.iter().enumerate() {
        set.set(i, 0, 0, l.1);
    }
    set.signal = Some(SignalKind::Peak);
    let mut prov = source.clone();
    let what = format!(
        "order {} of {dof}: {} blocks of {} revolutions, {} samples per revolution, Hann, {:.1} to {:.1} rpm",
        s.order,
        lines.len(),
        s.revolutions,
        s.samples_per_rev,
        lines[0].2,
        lines[lines.len() - 1].2
    );
    prov.options = if prov.options.is_empty() {
        what
    } else {
        format!("{}; {what}", prov.options)
    };
    set.provenance = vec![prov];
    Ok(set)
}

/// Order tracks of every channel of `rec` but the tachometer `tach`, one
/// set per quantity (channels of one quantity share the lines, which depend
/// on the speed only).
pub fn order_tracks(
    rec: &super::Recording,
    speed: &Speed,
    tach: Option<usize>,
    s: &OrderSettings,
    name: &str,
    source: &Provenance,
    limits: &crate::limits::Limits,
) -> Result<Vec<FrfSet>> {
    // resampling (about 20 operations a sample) and the blocks' FFTs
    // (2.5 log₂ N a sample for blocks of N), per channel and recorded sample
    let n = (s.revolutions * s.samples_per_rev).max(2) as f64;
    limits.check_work(
        "the order tracks",
        rec.channels.len() as f64 * rec.len() as f64 * (20.0 + 2.5 * n.log2()),
    )?;
    let mut sets: Vec<FrfSet> = Vec::new();
    for (c, ch) in rec.channels.iter().enumerate() {
        if Some(c) == tach {
            continue;
        }
        let t = order_track(
            &rec.samples[c],
            rec.fs,
            &ch.dof,
            ch.quantity,
            speed,
            s,
            name,
            source,
        )?;
        limits.check_set("the order tracks", t.n_lines(), rec.channels.len(), 1)?;
        match sets.iter_mut().find(|x| x.out_qty == t.out_qty) {
            Some(x) => {
                let mut data = Vec::with_capacity(x.n_lines() * (x.n_out() + 1));
                for k in 0..x.n_lines() {
                    data.extend_from_slice(x.line(k));
                    data.push(t.get(k, 0, 0));
                }
                x.data = data;
                x.outputs.push(ch.dof.clone());
                x.present.push(true);
            }
            None => sets.push(t),
        }
    }
    if sets.is_empty() {
        return Err(Error::usage("no channel to track besides the tachometer"));
    }
    if sets.len() > 1 {
        for x in &mut sets {
            x.name = format!("{} {}", x.name, x.out_qty.name());
        }
    }
    Ok(sets)
}

/// The tachometer's trigger level, pulses per revolution, revolutions per
/// block and samples per revolution when not given (the command line, the
/// recipe step and the page).
pub const ORDER_DEFAULTS: (f64, f64, usize, usize) = (0.5, 1.0, 8, 64);

/// Most rows of a speed sweep's source table made from an order track.
pub const MAX_BY_SPEED_ROWS: usize = 100_000;

/// One channel's order track as a speed sweep's source table
/// (`"by_speed"` rows `[speed rev/s, re, im]`, see the recipe's speed
/// sweep): `dof` and `order` as an entry of the sweep's `orders` takes them.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BySpeed {
    pub dof: String,
    pub order: f64,
    pub by_speed: Vec<[f64; 3]>,
}

/// The order tracks `sets` (of order `order`, lines at order × speed) read
/// at every multiple of `step` rev/s inside the tracked speeds, linear in
/// re and im between blocks (the sweep reads the table the same way), one
/// table per channel. Refused: a step that is not a positive number, a
/// range holding fewer than two steps, more than `max_rows` rows.
pub fn by_speed(sets: &[FrfSet], order: f64, step: f64, max_rows: usize) -> Result<Vec<BySpeed>> {
    if !(step.is_finite() && step > 0.0) {
        return Err(Error::usage(format!(
            "speed step {step} rev/s; expected a positive number"
        ))
        .field("by_speed"));
    }
    if !(order.is_finite() && order > 0.0) {
        return Err(
            Error::usage(format!("order {order}; expected a positive number")).field("order"),
        );
    }
    let mut out = Vec::new();
    for set in sets {
        let speeds: Vec<f64> = set.freqs.iter().map(|f| f / order).collect();
        let (Some(&lo), Some(&hi)) = (speeds.first(), speeds.last()) else {
            continue;
        };
        let first = (lo / step - 1e-9).ceil();
        let last = (hi / step + 1e-9).floor();
        let rows = last - first + 1.0;
        if rows.is_nan() || rows < 2.0 {
            return Err(Error::usage(format!(
                "the tracked speeds {lo:.4} to {hi:.4} rev/s hold fewer than two steps of {step} rev/s; choose a smaller step"
            ))
            .field("by_speed"));
        }
        if rows > max_rows as f64 {
            return Err(Error::usage(format!(
                "steps of {step} rev/s over {lo:.4} to {hi:.4} rev/s make {rows} rows, over {max_rows}; choose a larger step"
            ))
            .field("by_speed"));
        }
        for (j, dof) in set.outputs.iter().enumerate() {
            let mut table = Vec::with_capacity(rows as usize);
            let mut k = 0;
            for m in 0..rows as usize {
                let s = (first + m as f64) * step;
                // the block speeds around s (s inside [lo, hi] up to rounding)
                while k + 2 < speeds.len() && speeds[k + 1] < s {
                    k += 1;
                }
                let (s0, s1) = (speeds[k], speeds[(k + 1).min(speeds.len() - 1)]);
                let (a, b) = (
                    set.get(k, j, 0),
                    set.get((k + 1).min(speeds.len() - 1), j, 0),
                );
                let u = if s1 > s0 {
                    ((s - s0) / (s1 - s0)).clamp(0.0, 1.0)
                } else {
                    0.0
                };
                let v = a + (b - a) * u;
                table.push([s, v.re, v.im]);
            }
            out.push(BySpeed {
                dof: dof.to_string(),
                order,
                by_speed: table,
            });
        }
    }
    if out.is_empty() {
        return Err(Error::usage("no order track to tabulate").field("by_speed"));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Revolutions and samples per revolution come from users: a size of
    /// 0 or 1 sample, a product that overflows and a block longer than the
    /// recording are refused naming the field, not allowed to panic or
    /// allocate.
    #[test]
    fn block_sizes_are_refused_before_they_allocate() {
        let x = vec![0.0; 1000];
        let dof = Dof::parse("rig:1+Z", "").unwrap();
        let speed = Speed::Profile(vec![(0.0, 600.0), (1.0, 600.0)]);
        let src = Provenance::default();
        for (revs, spr, field) in [
            (1usize, 0usize, "samples per revolution"),
            (1, 1, "samples per revolution"),
            (usize::MAX, 64, "revolutions"),
            (100, 64, "revolutions"),
        ] {
            let s = OrderSettings {
                order: 1.0,
                revolutions: revs,
                samples_per_rev: spr,
            };
            let e = order_track(
                &x,
                1000.0,
                &dof,
                Quantity::Acceleration,
                &speed,
                &s,
                "t",
                &src,
            )
            .unwrap_err();
            assert_eq!(
                e.field.as_deref(),
                Some(field),
                "{revs} × {spr}: {}",
                e.message
            );
        }
    }

    /// A track linear in speed is read back exactly at every step (linear
    /// interpolation is exact on a line; common practice).
    #[test]
    fn by_speed_reads_a_linear_track_exactly_and_refuses_bad_steps() {
        // order 2 at block speeds 10.3, 12.1, 15.0, 19.9 rev/s
        let speeds = [10.3, 12.1, 15.0, 19.9];
        let mut set = FrfSet::zeros(
            "t",
            speeds.iter().map(|s| 2.0 * s).collect(),
            vec![Dof::parse("fan:1+Z", "").unwrap()],
            vec![Dof::scalar("", "ref")],
            Quantity::Force,
            Quantity::Dimensionless,
        );
        for (k, s) in speeds.iter().enumerate() {
            set.set(k, 0, 0, Complex64::new(0.5 + 0.1 * s, -0.02 * s));
        }
        let t = by_speed(&[set.clone()], 2.0, 2.5, 100).unwrap();
        let rows: Vec<f64> = t[0].by_speed.iter().map(|r| r[0]).collect();
        assert_eq!(rows, vec![12.5, 15.0, 17.5]);
        for r in &t[0].by_speed {
            assert!((r[1] - (0.5 + 0.1 * r[0])).abs() < 1e-12);
            assert!((r[2] + 0.02 * r[0]).abs() < 1e-12);
        }
        assert_eq!(t[0].dof, "fan:1+Z");
        assert!(by_speed(&[set.clone()], 2.0, 0.0, 100).is_err());
        assert!(by_speed(&[set.clone()], 2.0, 9.0, 100).is_err());
        assert!(by_speed(&[set], 2.0, 0.001, 100).is_err());
        assert_eq!(
            parse_profile("0:600, 20:3600").unwrap(),
            vec![(0.0, 600.0), (20.0, 3600.0)]
        );
        assert_eq!(
            parse_profile("0:600;20:3600").unwrap_err().field.as_deref(),
            Some("speed")
        );
    }
}
