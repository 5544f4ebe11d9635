//! Frequency grids: checks, overlap of several grids, resampling to a common
//! grid (never extrapolating).

use crate::error::{Error, Result};
use crate::frf::FrfSet;
use num_complex::Complex64;

/// A grid must be non-empty, finite, non-negative and strictly increasing.
pub fn check_grid(freqs: &[f64]) -> Result<()> {
    if freqs.is_empty() {
        return Err(Error::grid(
            "the frequency grid is empty; expected at least one line",
        ));
    }
    for (k, &f) in freqs.iter().enumerate() {
        if !f.is_finite() || f < 0.0 {
            return Err(Error::grid(format!(
                "frequency line {} is {f}; expected a finite, non-negative value in Hz",
                k + 1
            )));
        }
        if k > 0 && f <= freqs[k - 1] {
            return Err(Error::grid(format!(
                "frequency line {} ({f} Hz) does not exceed line {} ({} Hz); expected strictly increasing frequencies",
                k + 1,
                k,
                freqs[k - 1]
            )));
        }
    }
    Ok(())
}

/// The lines of an even grid: `from`, `from + step`, ... up to `to`
/// (included when within 1e-9 of a step), at most `max_lines` of them.
/// `what` names the grid in the errors ("grid", "--grid '10:1000:1'").
///
/// The count is computed in f64 and compared with `max_lines` before
/// anything is allocated, so a step of 1e-300 Hz is refused with the number
/// of lines it asks for (about 10³⁰²), never wrapped to an "empty" grid.
pub fn even_lines(what: &str, from: f64, to: f64, step: f64, max_lines: usize) -> Result<Vec<f64>> {
    if !(from.is_finite() && to.is_finite() && step.is_finite() && step > 0.0 && to >= from) {
        return Err(Error::grid(format!(
            "{what}: from {from} to {to} step {step}: expected finite numbers, from ≤ to and a step above 0"
        )));
    }
    // slack for rounding: 1e-9 of a step, and 1e-12 relative on long grids
    let q = (to - from) / step;
    let n = (q * (1.0 + 1e-12) + 1e-9).floor() + 1.0;
    if !n.is_finite() {
        return Err(Error::grid(format!(
            "{what}: from {from} to {to} step {step} asks for more lines than can be counted; at most {max_lines} are allowed"
        )));
    }
    if n > max_lines as f64 {
        return Err(Error::grid(format!(
            "{what}: from {from} to {to} step {step} asks for {} lines; at most {max_lines} are allowed",
            count_text(n)
        )));
    }
    // n is a whole number in [1, max_lines]: the conversion is exact
    let n = n as usize;
    Ok((0..n).map(|i| from + i as f64 * step).collect())
}

/// A count of lines in words: exact up to 10¹⁵, then as a power of ten.
fn count_text(n: f64) -> String {
    if n < 1e15 {
        format!("{n:.0}")
    } else {
        format!("{n:.3e}")
    }
}

/// How values between two lines are interpolated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Interp {
    /// Linear in the real and imaginary parts (the default).
    #[default]
    LinearReIm,
    /// Linear in log-magnitude and in unwrapped phase: keeps the magnitude of
    /// a lightly damped peak from dipping between lines. Falls back to
    /// re/im where a magnitude is zero.
    LogMagPhase,
}

impl Interp {
    pub fn parse(s: &str) -> Result<Interp> {
        match s.trim().to_ascii_lowercase().as_str() {
            "linear" | "re-im" | "reim" | "linear-re-im" => Ok(Interp::LinearReIm),
            "log-mag-phase" | "logmag" | "mag-phase" => Ok(Interp::LogMagPhase),
            _ => Err(Error::usage(format!(
                "unknown interpolation '{s}'; expected re-im or log-mag-phase"
            ))),
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Interp::LinearReIm => "linear in re/im",
            Interp::LogMagPhase => "linear in log-magnitude and unwrapped phase",
        }
    }
}

/// How the lines of a grid are spaced.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(tag = "spacing", rename_all = "kebab-case")]
pub enum Spacing {
    /// One line only.
    Single,
    /// Every step equal to `step` Hz (to 1e-6 relative).
    Even { step: f64 },
    /// Steps differ; the smallest and largest.
    Uneven { min_step: f64, max_step: f64 },
}

/// The spacing of a (checked) grid.
pub fn spacing(freqs: &[f64]) -> Spacing {
    if freqs.len() < 2 {
        return Spacing::Single;
    }
    let steps: Vec<f64> = freqs.windows(2).map(|w| w[1] - w[0]).collect();
    let min = steps.iter().cloned().fold(f64::INFINITY, f64::min);
    let max = steps.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    let mean = (freqs[freqs.len() - 1] - freqs[0]) / steps.len() as f64;
    if (max - min) <= 1e-6 * mean.abs() {
        Spacing::Even { step: mean }
    } else {
        Spacing::Uneven {
            min_step: min,
            max_step: max,
        }
    }
}

/// Two lines are the same when they differ by at most this fraction of the larger.
pub const SAME_LINE_REL: f64 = 1e-9;

fn same_line(x: f64, y: f64) -> bool {
    (x - y).abs() <= SAME_LINE_REL * x.abs().max(y.abs())
}

/// The one "same grid" rule of mortise: as many lines, each equal within
/// [`SAME_LINE_REL`] relative (files written with 6 to 17 digits still match).
pub fn same_grid(a: &[f64], b: &[f64]) -> bool {
    a.len() == b.len() && a.iter().zip(b).all(|(&x, &y)| same_line(x, y))
}

/// Error unless `b` has the grid of `a` ([`same_grid`]); `what` names the
/// operation. The message names both grids, the first line that differs and
/// the ways to bring the sets onto one grid.
pub fn require_same_grid(a: &FrfSet, b: &FrfSet, what: &str) -> Result<()> {
    if same_grid(&a.freqs, &b.freqs) {
        return Ok(());
    }
    let detail = match a
        .freqs
        .iter()
        .zip(&b.freqs)
        .position(|(&x, &y)| !same_line(x, y))
    {
        Some(k) => format!(
            "; they first differ at line {} ({} Hz against {} Hz)",
            k + 1,
            a.freqs[k],
            b.freqs[k]
        ),
        None => String::new(),
    };
    let text = |s: &FrfSet| format!("{} lines, {}", s.n_lines(), range_text(&s.freqs));
    Err(Error::grid(format!(
        "{what} needs one frequency grid, but '{}' has {} and '{}' has {}{detail}; bring them onto one grid with a 'resample' step in the recipe (or a 'grid' on the component; on the command line, mortise convert --grid)",
        a.name,
        text(a),
        b.name,
        text(b)
    )))
}

fn range_text(g: &[f64]) -> String {
    match (g.first(), g.last()) {
        (Some(a), Some(b)) => format!("{a}–{b} Hz"),
        _ => "no lines".into(),
    }
}

/// The frequency range every grid covers: (max of the starts, min of the ends).
/// `names` label the grids in the error (may be shorter than `grids`).
pub fn overlap(grids: &[&[f64]], names: &[&str]) -> Result<(f64, f64)> {
    if grids.is_empty() {
        return Err(Error::grid("no grids to overlap"));
    }
    let label = |n: usize| {
        names
            .get(n)
            .map_or(format!("grid {}", n + 1), |s| format!("'{s}'"))
    };
    for (n, g) in grids.iter().enumerate() {
        check_grid(g).map_err(|e| e.field(label(n)))?;
    }
    let lo = grids.iter().map(|g| g[0]).fold(f64::NEG_INFINITY, f64::max);
    let hi = grids
        .iter()
        .map(|g| g[g.len() - 1])
        .fold(f64::INFINITY, f64::min);
    if lo > hi {
        let ranges: Vec<String> = grids
            .iter()
            .enumerate()
            .map(|(n, g)| format!("{} {}", label(n), range_text(g)))
            .collect();
        return Err(Error::grid(format!(
            "the frequency ranges do not overlap: {}",
            ranges.join(", ")
        )));
    }
    Ok((lo, hi))
}

/// Relative slack at the ends of a grid, so a target end computed with
/// rounding error (999.9999999999 against 1000) is not called extrapolation.
const END_SLACK: f64 = 1e-9;

/// Resample one FRF (values `v` on grid `src`) onto `dst`, never extrapolating.
/// Lines of `dst` equal to lines of `src` get the source value unchanged.
pub fn resample_values(
    src: &[f64],
    v: &[Complex64],
    dst: &[f64],
    interp: Interp,
) -> Result<Vec<Complex64>> {
    check_grid(src)?;
    check_grid(dst)?;
    let (lo, hi) = (src[0], src[src.len() - 1]);
    let slack = END_SLACK * hi.abs().max(1.0);
    let (dlo, dhi) = (dst[0], dst[dst.len() - 1]);
    if dlo < lo - slack || dhi > hi + slack {
        return Err(Error::grid(format!(
            "the target grid {} reaches beyond the data's {}; mortise does not extrapolate: \
             choose a target grid inside the data's range or get data covering {}",
            range_text(dst),
            range_text(src),
            range_text(dst)
        )));
    }
    // unwrapped phase and log-magnitude for the log option
    let (lm, ph) = if interp == Interp::LogMagPhase {
        let lm: Vec<f64> = v.iter().map(|c| c.norm().ln()).collect();
        let mut ph = Vec::with_capacity(v.len());
        let mut acc = 0.0;
        for (k, c) in v.iter().enumerate() {
            let a = c.arg();
            if k == 0 {
                acc = a;
            } else {
                let prev = v[k - 1].arg();
                let mut d = a - prev;
                while d > std::f64::consts::PI {
                    d -= 2.0 * std::f64::consts::PI;
                }
                while d <= -std::f64::consts::PI {
                    d += 2.0 * std::f64::consts::PI;
                }
                acc += d;
            }
            ph.push(acc);
        }
        (lm, ph)
    } else {
        (Vec::new(), Vec::new())
    };
    let mut out = Vec::with_capacity(dst.len());
    for &f in dst {
        let f = f.clamp(lo, hi);
        let p = src.partition_point(|&x| x < f);
        if p < src.len() && src[p] == f {
            out.push(v[p]);
            continue;
        }
        // src[p-1] < f < src[p]
        let (a, b) = (p - 1, p);
        let t = (f - src[a]) / (src[b] - src[a]);
        let lin = v[a] + (v[b] - v[a]) * t;
        let val = match interp {
            Interp::LinearReIm => lin,
            Interp::LogMagPhase => {
                if lm[a].is_finite() && lm[b].is_finite() {
                    let m = (lm[a] + (lm[b] - lm[a]) * t).exp();
                    Complex64::from_polar(m, ph[a] + (ph[b] - ph[a]) * t)
                } else {
                    lin
                }
            }
        };
        out.push(val);
    }
    Ok(out)
}

/// Resample a whole set onto `dst`. Missing entries stay missing; coherence
/// is interpolated linearly. Adds a warning saying what was done.
pub fn resample(set: &FrfSet, dst: &[f64], interp: Interp) -> Result<FrfSet> {
    if same_grid(&set.freqs, dst) {
        let mut s = set.clone();
        s.freqs = dst.to_vec();
        return Ok(s);
    }
    let (n_out, n_in) = (set.n_out(), set.n_in());
    let mut s = FrfSet::zeros(
        &set.name,
        dst.to_vec(),
        set.outputs.clone(),
        set.inputs.clone(),
        set.out_qty,
        set.in_qty,
    );
    s.present = set.present.clone();
    let mut coh = set.coherence.as_ref().map(|_| vec![f64::NAN; s.data.len()]);
    for i in 0..n_out {
        for j in 0..n_in {
            let col: Vec<Complex64> = if set.is_present(i, j) {
                let r = resample_values(&set.freqs, &set.column(i, j), dst, interp)
                    .map_err(|e| e.field(format!("'{}'", set.name)))?;
                r
            } else {
                vec![Complex64::new(f64::NAN, f64::NAN); dst.len()]
            };
            for (k, v) in col.into_iter().enumerate() {
                s.set(k, i, j, v);
            }
            if let (Some(src_c), Some(c)) = (&set.coherence, coh.as_mut()) {
                let sc: Vec<Complex64> = (0..set.n_lines())
                    .map(|k| Complex64::new(src_c[set.idx(k, i, j)], 0.0))
                    .collect();
                let r = resample_values(&set.freqs, &sc, dst, Interp::LinearReIm)?;
                for (k, v) in r.into_iter().enumerate() {
                    c[(k * n_out + i) * n_in + j] = v.re;
                }
            }
        }
    }
    s.coherence = coh;
    s.provenance = set.provenance.clone();
    s.warnings = set.warnings.clone();
    s.signal = set.signal;
    s.warnings.push(format!(
        "'{}' resampled from {} lines ({}) to {} lines ({}), {}",
        set.name,
        set.n_lines(),
        range_text(&set.freqs),
        dst.len(),
        range_text(dst),
        interp.name()
    ));
    Ok(s)
}

/// How to choose a common grid for several sets.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
#[serde(tag = "grid", rename_all = "kebab-case")]
pub enum GridChoice {
    /// The lines, inside the overlap, of the set that has most lines there.
    #[default]
    Finest,
    /// The lines, inside the overlap, of the set that has fewest lines there
    /// (no set is interpolated onto a finer grid than its own).
    Coarsest,
    /// The given lines (checked to lie inside the overlap).
    Given { freqs: Vec<f64> },
}

/// A grid every set covers, chosen as `choice` says.
pub fn common_grid(sets: &[&FrfSet], choice: &GridChoice) -> Result<Vec<f64>> {
    let grids: Vec<&[f64]> = sets.iter().map(|s| s.freqs.as_slice()).collect();
    let names: Vec<&str> = sets.iter().map(|s| s.name.as_str()).collect();
    let (lo, hi) = overlap(&grids, &names)?;
    let inside =
        |g: &[f64]| -> Vec<f64> { g.iter().copied().filter(|&f| f >= lo && f <= hi).collect() };
    match choice {
        GridChoice::Finest | GridChoice::Coarsest => {
            let mut best: Option<Vec<f64>> = None;
            for g in &grids {
                let c = inside(g);
                if c.is_empty() {
                    continue;
                }
                let better = match &best {
                    None => true,
                    Some(b) => {
                        if *choice == GridChoice::Finest {
                            c.len() > b.len()
                        } else {
                            c.len() < b.len()
                        }
                    }
                };
                if better {
                    best = Some(c);
                }
            }
            best.ok_or_else(|| {
                Error::grid(format!(
                    "no set has a line inside the common range {lo}–{hi} Hz; give a grid explicitly"
                ))
            })
        }
        GridChoice::Given { freqs } => {
            check_grid(freqs).map_err(|e| e.field("given grid"))?;
            let (a, b) = (freqs[0], freqs[freqs.len() - 1]);
            let slack = END_SLACK * hi.abs().max(1.0);
            if a < lo - slack || b > hi + slack {
                return Err(Error::grid(format!(
                    "the given grid {} reaches beyond the range every set covers, {lo}–{hi} Hz ({}); mortise does not extrapolate",
                    range_text(freqs),
                    sets.iter()
                        .map(|s| format!("'{}' {}", s.name, range_text(&s.freqs)))
                        .collect::<Vec<_>>()
                        .join(", ")
                )));
            }
            Ok(freqs.clone())
        }
    }
}

/// Bring several sets onto one grid chosen by `choice`: sets already on it
/// are returned unchanged, the others resampled with `interp`.
pub fn to_common_grid(
    sets: &[FrfSet],
    choice: &GridChoice,
    interp: Interp,
) -> Result<(Vec<f64>, Vec<FrfSet>)> {
    let refs: Vec<&FrfSet> = sets.iter().collect();
    let g = common_grid(&refs, choice)?;
    let out = sets
        .iter()
        .map(|s| resample(s, &g, interp))
        .collect::<Result<Vec<_>>>()?;
    Ok((g, out))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Direction, Dof};
    use crate::units::Quantity;

    fn set(name: &str, freqs: Vec<f64>, h: impl Fn(f64) -> Complex64) -> FrfSet {
        let d = Dof::new("c", "1", Direction::Z);
        let mut s = FrfSet::zeros(
            name,
            freqs.clone(),
            vec![d.clone()],
            vec![d],
            Quantity::Displacement,
            Quantity::Force,
        );
        for (k, &f) in freqs.iter().enumerate() {
            s.set(k, 0, 0, h(f));
        }
        s
    }

    #[test]
    fn linear_is_exact_for_linear_functions() {
        // a + b f is reproduced exactly by linear interpolation (definition of linear interpolation)
        let h = |f: f64| Complex64::new(2.0 + 0.5 * f, -1.0 + 0.25 * f);
        let s = set("a", vec![0.0, 4.0, 8.0], h);
        let r = resample(&s, &[1.0, 2.0, 6.0, 8.0], Interp::LinearReIm).unwrap();
        for (k, &f) in r.freqs.iter().enumerate() {
            assert!((r.get(k, 0, 0) - h(f)).norm() < 1e-14);
        }
        assert!(r.warnings.iter().any(|w| w.contains("resampled")));
    }

    #[test]
    fn log_mag_phase_is_exact_for_exponentials_and_unwraps() {
        // exp((a + ib) f): log-magnitude a f and phase b f are linear in f,
        // so this interpolation reproduces it; b*Δf = 2.5 rad crosses ±π between lines.
        let (a, b) = (-0.3, 2.5);
        let h = |f: f64| (Complex64::new(a, b) * f).exp();
        let s = set("a", (0..10).map(|k| k as f64).collect(), h);
        let dst: Vec<f64> = (0..37).map(|k| k as f64 * 0.25).collect();
        let r = resample(&s, &dst, Interp::LogMagPhase).unwrap();
        for (k, &f) in dst.iter().enumerate() {
            assert!((r.get(k, 0, 0) - h(f)).norm() < 1e-12, "f={f}");
        }
        // linear re/im is not exact for it (the check can fail)
        let l = resample(&s, &dst, Interp::LinearReIm).unwrap();
        assert!((l.get(1, 0, 0) - h(0.25)).norm() > 1e-3);
    }

    #[test]
    fn refuses_to_extrapolate_naming_both_ranges() {
        let s = set("a", vec![10.0, 20.0, 30.0], |_| Complex64::new(1.0, 0.0));
        let e = resample(&s, &[5.0, 10.0], Interp::LinearReIm).unwrap_err();
        assert_eq!(e.kind, crate::ErrorKind::Grid);
        assert!(e.message.contains("5–10 Hz"), "{}", e.message);
        assert!(e.message.contains("10–30 Hz"), "{}", e.message);
        // a rounding-level overshoot at the end is not extrapolation
        assert!(resample(&s, &[10.0, 30.000000000001], Interp::LinearReIm).is_ok());
    }

    #[test]
    fn overlap_and_common_grid() {
        let a = set("a", (0..=100).map(|k| k as f64).collect(), |_| {
            Complex64::new(1.0, 0.0)
        });
        let b = set(
            "b",
            (0..=20).map(|k| 10.0 + 5.0 * k as f64).collect(),
            |_| Complex64::new(1.0, 0.0),
        );
        assert_eq!(
            overlap(&[&a.freqs, &b.freqs], &["a", "b"]).unwrap(),
            (10.0, 100.0)
        );
        let g = common_grid(&[&a, &b], &GridChoice::Finest).unwrap();
        assert_eq!(g.len(), 91);
        assert_eq!((g[0], g[90]), (10.0, 100.0));
        let g = common_grid(&[&a, &b], &GridChoice::Coarsest).unwrap();
        assert_eq!(g, b.freqs[..19].to_vec()); // b's lines inside 10–100 Hz
        let e = common_grid(
            &[&a, &b],
            &GridChoice::Given {
                freqs: vec![5.0, 50.0],
            },
        )
        .unwrap_err();
        assert!(e.message.contains("'b' 10–110 Hz"), "{}", e.message);
        let c = set("c", vec![200.0, 300.0], |_| Complex64::new(1.0, 0.0));
        let e = overlap(&[&a.freqs, &c.freqs], &["a", "c"]).unwrap_err();
        assert!(e.message.contains("do not overlap"), "{}", e.message);
    }

    #[test]
    fn to_common_grid_leaves_sets_on_it_alone() {
        let a = set("a", vec![0.0, 1.0, 2.0, 3.0], |f| Complex64::new(f, 0.0));
        let b = set("b", vec![0.5, 2.5], |f| Complex64::new(2.0 * f, 1.0));
        let (g, v) =
            to_common_grid(&[a.clone(), b], &GridChoice::Finest, Interp::LinearReIm).unwrap();
        assert_eq!(g, vec![1.0, 2.0]);
        assert_eq!(v[0].get(0, 0, 0), Complex64::new(1.0, 0.0));
        assert_eq!(v[1].get(1, 0, 0), Complex64::new(4.0, 1.0));
        let (_, v) = to_common_grid(
            &[a.clone(), a.clone()],
            &GridChoice::Finest,
            Interp::LinearReIm,
        )
        .unwrap();
        assert_eq!(v[0], a);
    }

    #[test]
    fn an_even_grid_counts_its_lines_before_allocating() {
        let g = even_lines("grid", 10.0, 20.0, 2.5, 100).unwrap();
        assert_eq!(g, vec![10.0, 12.5, 15.0, 17.5, 20.0]);
        // (1000 − 10) / 1e-300 ≈ 9.9e302 lines: the count, never "empty"
        let e = even_lines("grid", 10.0, 1000.0, 1e-300, 1_000_000).unwrap_err();
        assert!(e.message.contains("asks for 9.900e302 lines"), "{e}");
        assert!(e.message.contains("at most 1000000"), "{e}");
        assert!(!e.message.contains("empty"), "{e}");
        let e = even_lines("grid", -1e308, 1e308, 1.0, 10).unwrap_err();
        assert!(e.message.contains("more lines than can be counted"), "{e}");
        assert!(even_lines("grid", 10.0, 5.0, 1.0, 10).is_err());
        assert!(even_lines("grid", 0.0, 5.0, 0.0, 10).is_err());
        assert!(even_lines("grid", 0.0, 5.0, f64::NAN, 10).is_err());
        let e = even_lines("grid", 0.0, 10.0, 0.001, 1000).unwrap_err();
        assert!(e.message.contains("asks for 10001 lines"), "{e}");
    }

    #[test]
    fn spacing_kinds() {
        assert_eq!(spacing(&[1.0, 1.5, 2.0]), Spacing::Even { step: 0.5 });
        assert!(matches!(spacing(&[1.0, 2.0, 4.0]), Spacing::Uneven { .. }));
        assert_eq!(spacing(&[3.0]), Spacing::Single);
    }
}
