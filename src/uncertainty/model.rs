//! The uncertainty of a measured FRF set: one standard uncertainty per
//! entry and line, and the three ways to obtain it (coherence and averages,
//! repeated measurements, a relative uncertainty with a floor).
//!
//! # The model
//! Each complex value H of a set carries a standard uncertainty `u` with
//! u² = E|δH|² (the total over real and imaginary parts). The error is taken
//! as circular: its real and imaginary parts are uncorrelated with variance
//! u²/2 each, so |H| and |H|·arg H have standard deviation u/√2 when u ≪ |H|.
//! The errors of different entries and lines are independent. Missing
//! entries hold NaN, as the set's data do.

use crate::error::{Error, Result};
use crate::frf::FrfSet;
use serde::{Deserialize, Serialize};

/// Standard uncertainties of every value of one [`FrfSet`] (same layout as
/// its `data`: line-major, n_out × n_in per line; see the module docs).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FrfUncertainty {
    /// u per value, u² = E|δH|², in the set's SI unit; NaN where missing.
    pub std: Vec<f64>,
    /// How it was obtained, in words (for the report).
    pub method: String,
}

impl FrfUncertainty {
    /// Error unless this has one value per value of `set`.
    pub fn check_fits(&self, set: &FrfSet) -> Result<()> {
        if self.std.len() != set.data.len() {
            return Err(Error::numeric(format!(
                "the uncertainty has {} values but '{}' has {} ({} lines × {} outputs × {} inputs)",
                self.std.len(),
                set.name,
                set.data.len(),
                set.n_lines(),
                set.n_out(),
                set.n_in()
            )));
        }
        Ok(())
    }

    /// The uncertainty of the same set converted from motion order
    /// `from` to `to` by (iω)^(to − from): each u scales by ω^(to − from).
    pub fn reordered(&self, set: &FrfSet, from: i32, to: i32) -> FrfUncertainty {
        let p = to - from;
        if p == 0 {
            return self.clone();
        }
        let nm = set.n_out() * set.n_in();
        let mut std = self.std.clone();
        for k in 0..set.n_lines() {
            let f = set.omega(k).powi(p);
            for v in &mut std[k * nm..(k + 1) * nm] {
                *v *= f;
            }
        }
        FrfUncertainty {
            std,
            method: self.method.clone(),
        }
    }
}

/// Normalized random error of |Ĥ| for an H1 estimate from `averages`
/// independent averages at ordinary coherence `gamma2` (Bendat & Piersol,
/// Random Data, eq. 9.73: ε = √(1 − γ²) / (|γ| √(2 n_d))). The standard
/// deviation of the phase estimate, in radians, is the same number.
/// Valid for small errors (ε below about 0.2, their statement).
pub fn h1_normalized_random_error(gamma2: f64, averages: f64) -> f64 {
    (1.0 - gamma2).max(0.0).sqrt() / (gamma2.sqrt() * (2.0 * averages).sqrt())
}

/// The uncertainty of a set from its coherence and the number of averages
/// of its H1 estimate: per value u = √2 · ε · |H| (ε of
/// [`h1_normalized_random_error`]; √2 because ε applies to the magnitude and
/// to |H| times the phase alike, and u counts both). A coherence of 0 (no
/// linear relation) gives an infinite u; a coherence outside [0, 1] or
/// missing on a present entry is refused.
pub fn from_coherence(set: &FrfSet, averages: f64) -> Result<FrfUncertainty> {
    if !(averages.is_finite() && averages >= 1.0) {
        return Err(Error::usage(format!(
            "the number of averages is {averages}; expected a finite number of at least 1"
        ))
        .field("averages"));
    }
    let coh = set.coherence.as_ref().ok_or_else(|| {
        Error::missing(format!(
            "'{}' carries no coherence, so its uncertainty cannot come from coherence and averages; give a relative uncertainty instead",
            set.name
        ))
        .field("averages")
    })?;
    if coh.len() != set.data.len() {
        return Err(Error::numeric(format!(
            "'{}': {} coherence values for {} FRF values",
            set.name,
            coh.len(),
            set.data.len()
        )));
    }
    let (no, ni) = (set.n_out(), set.n_in());
    let mut std = vec![f64::NAN; set.data.len()];
    for k in 0..set.n_lines() {
        for i in 0..no {
            for j in 0..ni {
                if !set.is_present(i, j) {
                    continue;
                }
                let x = set.idx(k, i, j);
                let g2 = coh[x];
                if !(g2.is_finite() && (0.0..=1.0).contains(&g2)) {
                    return Err(Error::numeric(format!(
                        "'{}': the coherence of {} / {} at {} Hz is {g2}; expected a value from 0 to 1 on every line of a present entry",
                        set.name, set.outputs[i], set.inputs[j], set.freqs[k]
                    ))
                    .field("averages"));
                }
                let eps = h1_normalized_random_error(g2, averages);
                std[x] = std::f64::consts::SQRT_2 * eps * set.data[x].norm();
            }
        }
    }
    Ok(FrfUncertainty {
        std,
        method: format!(
            "from coherence with {averages} averages (H1 random error, Bendat & Piersol)"
        ),
    })
}

/// A relative uncertainty with a floor: u = √((r·|H|)² + (f·P)²), with r
/// the relative standard uncertainty and f = 10^(floor_db / 20). P is the
/// peak of the entry as accelerance when the set is motion per force (the
/// noise floor of an accelerometer is flat in acceleration, so the floor is
/// constant in accelerance and falls as 1/ω or 1/ω² in mobility or
/// receptance), else the largest |H| of the entry over the grid in its own
/// kind.
pub fn relative_with_floor(set: &FrfSet, relative: f64, floor_db: Option<f64>) -> FrfUncertainty {
    let (no, ni) = (set.n_out(), set.n_in());
    let f = floor_db.map_or(0.0, |d| 10f64.powf(d / 20.0));
    // power of ω taking a value of this set to accelerance
    let to_acc = match (set.out_qty.motion_order(), set.in_qty, set.signal) {
        (Some(o), crate::units::Quantity::Force, None) => Some(2 - o),
        _ => None,
    };
    let scale = |k: usize| to_acc.map_or(1.0, |p| set.omega(k).powi(p));
    let mut std = vec![f64::NAN; set.data.len()];
    for i in 0..no {
        for j in 0..ni {
            if !set.is_present(i, j) {
                continue;
            }
            let peak = (0..set.n_lines())
                .map(|k| set.get(k, i, j).norm() * scale(k))
                .fold(0.0, f64::max);
            for k in 0..set.n_lines() {
                let x = set.idx(k, i, j);
                std[x] = (relative * set.data[x].norm()).hypot(f * peak / scale(k));
            }
        }
    }
    let peak = if to_acc.is_some() {
        "accelerance peak"
    } else {
        "peak"
    };
    FrfUncertainty {
        std,
        method: match floor_db {
            Some(d) => format!(
                "relative {}, floor {d} dB re each FRF's {peak}",
                fmt_rel(relative)
            ),
            None => format!("relative {}", fmt_rel(relative)),
        },
    }
}

fn fmt_rel(r: f64) -> String {
    format!("{} %", r * 100.0)
}

/// Repeated measurements of one component (same grid, DOFs and kind): the
/// estimate is the mean, and its standard uncertainty per value is the
/// standard deviation of the mean, u² = Σ|Hₙ − H̄|² / (N (N − 1)) (GUM
/// 4.2.3, for the complex value as a whole). Returns the mean set (named
/// after the first) and its uncertainty. An entry is present in the mean
/// only where it is present in every repeat.
pub fn from_repeats(sets: &[FrfSet]) -> Result<(FrfSet, FrfUncertainty)> {
    let n = sets.len();
    if n < 2 {
        return Err(Error::usage(format!(
            "repeated measurements need at least 2 sets of the same component; {n} given"
        )));
    }
    let first = &sets[0];
    for s in &sets[1..] {
        crate::grid::require_same_grid(first, s, "repeated measurements")?;
        if s.outputs != first.outputs
            || s.inputs != first.inputs
            || s.out_qty != first.out_qty
            || s.in_qty != first.in_qty
            || s.signal != first.signal
        {
            return Err(Error::dof(format!(
                "repeated measurements must hold the same DOFs and quantities: '{}' differs from '{}'",
                s.name, first.name
            )));
        }
    }
    let mut mean = first.clone();
    mean.coherence = None;
    for (p, v) in mean.present.iter_mut().enumerate() {
        *v = sets.iter().all(|s| s.present[p]);
    }
    let nm = first.n_out() * first.n_in();
    let nan = num_complex::Complex64::new(f64::NAN, f64::NAN);
    let mut std = vec![f64::NAN; first.data.len()];
    let nf = n as f64;
    for (x, (m, u)) in mean.data.iter_mut().zip(&mut std).enumerate() {
        if !mean.present[x % nm] {
            *m = nan;
            continue;
        }
        let avg = sets
            .iter()
            .map(|s| s.data[x])
            .sum::<num_complex::Complex64>()
            / nf;
        let ss: f64 = sets.iter().map(|s| (s.data[x] - avg).norm_sqr()).sum();
        *m = avg;
        *u = (ss / (nf * (nf - 1.0))).sqrt();
    }
    Ok((
        mean,
        FrfUncertainty {
            std,
            method: format!("from {n} repeated measurements (standard deviation of the mean)"),
        },
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;
    use crate::units::Quantity;
    use num_complex::Complex64;

    fn one(vals: &[Complex64]) -> FrfSet {
        let freqs: Vec<f64> = (0..vals.len()).map(|k| 10.0 + k as f64).collect();
        let mut s = FrfSet::zeros(
            "a",
            freqs,
            vec![Dof::parse("a:1+Z", "").unwrap()],
            vec![Dof::parse("a:1+Z", "").unwrap()],
            Quantity::Acceleration,
            Quantity::Force,
        );
        s.data = vals.to_vec();
        s
    }

    #[test]
    fn bendat_piersol_random_error_hand_worked() {
        // Bendat & Piersol eq. 9.73, worked by hand:
        // γ² = 0.9, n_d = 10: √0.1 / (√0.9 · √20) = 0.316228 / 4.242641 = 0.0745356
        let e = h1_normalized_random_error(0.9, 10.0);
        assert!((e - 0.074_535_6).abs() < 1e-7, "{e}");
        // γ² = 0.5, n_d = 50: √0.5 / (√0.5 · 10) = 0.1 exactly
        assert!((h1_normalized_random_error(0.5, 50.0) - 0.1).abs() < 1e-15);
        // γ² = 1: no random error
        assert_eq!(h1_normalized_random_error(1.0, 4.0), 0.0);
    }

    #[test]
    fn coherence_gives_root_two_epsilon_times_magnitude() {
        let mut s = one(&[Complex64::new(3.0, 4.0), Complex64::new(0.0, 2.0)]);
        s.coherence = Some(vec![0.5, 1.0]);
        let u = from_coherence(&s, 50.0).unwrap();
        // ε = 0.1 (hand-worked above), |H| = 5: u = √2 · 0.1 · 5
        assert!((u.std[0] - 2f64.sqrt() * 0.5).abs() < 1e-14);
        assert_eq!(u.std[1], 0.0);
        assert!(u.method.contains("50 averages"));
    }

    #[test]
    fn coherence_errors_name_the_field() {
        let s = one(&[Complex64::new(1.0, 0.0)]);
        let e = from_coherence(&s, 10.0).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("averages"));
        let mut s = s;
        s.coherence = Some(vec![1.5]);
        let e = from_coherence(&s, 10.0).unwrap_err();
        assert!(e.message.contains("1.5"), "{}", e.message);
        let e = from_coherence(&s, 0.0).unwrap_err();
        assert!(e.message.contains("averages"), "{}", e.message);
    }

    #[test]
    fn relative_with_floor_adds_in_quadrature() {
        let s = one(&[Complex64::new(100.0, 0.0), Complex64::new(0.0, 0.1)]);
        let u = relative_with_floor(&s, 0.01, Some(-60.0));
        // peak 100, floor 100 · 1e-3 = 0.1; line 1: √(1² + 0.1²)
        assert!((u.std[0] - 1.01f64.sqrt()).abs() < 1e-12);
        assert!((u.std[1] - (1e-6f64 + 0.01).sqrt()).abs() < 1e-12);
        let u = relative_with_floor(&s, 0.02, None);
        assert!((u.std[1] - 0.002).abs() < 1e-15);
        // receptance: the floor is 1e-3 of the accelerance peak, taken back by 1/ω²
        let mut r = s.clone();
        r.out_qty = Quantity::Displacement;
        let w = [r.omega(0), r.omega(1)];
        let peak = (100.0 * w[0] * w[0]).max(0.1 * w[1] * w[1]);
        let u = relative_with_floor(&r, 0.0, Some(-60.0));
        for (k, wk) in w.iter().enumerate() {
            assert!((u.std[k] - 1e-3 * peak / (wk * wk)).abs() < 1e-12 * u.std[k]);
        }
    }

    #[test]
    fn repeats_give_mean_and_standard_deviation_of_the_mean() {
        // three repeats of one value: 1, 2, 3 (+0i): mean 2, s² = 1, u² = s²/N = 1/3
        let sets: Vec<FrfSet> = [1.0, 2.0, 3.0]
            .iter()
            .map(|&v| one(&[Complex64::new(v, 0.0)]))
            .collect();
        let (m, u) = from_repeats(&sets).unwrap();
        assert_eq!(m.data[0], Complex64::new(2.0, 0.0));
        assert!((u.std[0] - (1.0f64 / 3.0).sqrt()).abs() < 1e-15);
        assert!(from_repeats(&sets[..1]).is_err());
        let mut other = sets[1].clone();
        other.outputs[0] = Dof::parse("a:2+Z", "").unwrap();
        assert!(from_repeats(&[sets[0].clone(), other]).is_err());
    }

    #[test]
    fn reordering_scales_by_omega_power() {
        let s = one(&[Complex64::new(1.0, 0.0)]);
        let u = FrfUncertainty {
            std: vec![2.0],
            method: String::new(),
        };
        let r = u.reordered(&s, 2, 1);
        assert!((r.std[0] - 2.0 / s.omega(0)).abs() < 1e-15);
    }
}
