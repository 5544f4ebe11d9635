//! Monte Carlo propagation: the inputs drawn N times with their circular
//! errors ([`super::draws`], seeded), the operation run on every draw, and
//! the sample mean and standard deviation of each result value.
//!
//! The draw of input value `v` of input `c` in draw `d` is the normal pair
//! number d·T + o_c + v of the seed (T the number of values of all inputs
//! together, o_c those of the inputs before `c`), times u/√2. A value
//! without uncertainty (none given, or missing) is left as it is. The
//! standard deviation is about the sample mean, with N − 1, over the real and
//! imaginary parts together (u² = var(re) + var(im), the model's u).

use super::draws;
use super::model::FrfUncertainty;
use crate::assemble::{couple, decouple, CouplingOptions, Joint};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use num_complex::Complex64;

/// How many draws, from which seed.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct McOptions {
    pub draws: usize,
    pub seed: u64,
}

/// The sample statistics of a Monte Carlo run, per result value.
#[derive(Debug, Clone, PartialEq)]
pub struct McResult {
    pub draws: usize,
    pub seed: u64,
    pub mean: Vec<Complex64>,
    /// Sample standard deviation (N − 1), real and imaginary parts together.
    pub std: Vec<f64>,
}

impl McResult {
    /// The standard deviations as an uncertainty, with the method in words.
    pub fn uncertainty(&self, what: &str) -> FrfUncertainty {
        FrfUncertainty {
            std: self.std.clone(),
            method: format!(
                "Monte Carlo through {what}: {} draws, seed {}",
                self.draws, self.seed
            ),
        }
    }
}

/// Run `f` on `mc.draws` perturbed copies of `inputs` and gather the
/// statistics of its result; `observe` sees every draw's result (for levels
/// or intervals computed from the draws).
pub fn monte_carlo_with(
    inputs: &[FrfSet],
    uncertainties: &[Option<&FrfUncertainty>],
    mc: McOptions,
    f: &dyn Fn(&[FrfSet]) -> Result<FrfSet>,
    observe: &mut dyn FnMut(usize, &FrfSet),
) -> Result<McResult> {
    if mc.draws < 2 {
        return Err(Error::usage(format!(
            "a Monte Carlo propagation needs at least 2 draws; {} asked",
            mc.draws
        ))
        .field("draws"));
    }
    if uncertainties.len() != inputs.len() {
        return Err(Error::usage(format!(
            "{} uncertainties for {} inputs; give one (or none) per input",
            uncertainties.len(),
            inputs.len()
        )));
    }
    for (s, u) in inputs.iter().zip(uncertainties) {
        if let Some(u) = u {
            u.check_fits(s)?;
        }
    }
    let total: u64 = inputs.iter().map(|s| s.data.len() as u64).sum();
    let mut draw: Vec<FrfSet> = inputs.to_vec();
    let mut mean: Vec<Complex64> = Vec::new();
    let mut m2: Vec<f64> = Vec::new();
    for d in 0..mc.draws {
        let mut base = (d as u64).wrapping_mul(total);
        for ((dst, src), u) in draw.iter_mut().zip(inputs).zip(uncertainties) {
            if let Some(u) = u {
                for (v, ((x, y), s)) in dst.data.iter_mut().zip(&src.data).zip(&u.std).enumerate() {
                    *x = if s.is_finite() && *s > 0.0 {
                        *y + draws::circular(mc.seed, base + v as u64, *s)
                    } else {
                        *y
                    };
                }
            }
            base += src.data.len() as u64;
        }
        let r = f(&draw).map_err(|e| {
            let mut e = e;
            e.message = format!("Monte Carlo draw {}: {}", d + 1, e.message);
            e
        })?;
        if d == 0 {
            mean = vec![Complex64::new(0.0, 0.0); r.data.len()];
            m2 = vec![0.0; r.data.len()];
        } else if r.data.len() != mean.len() {
            return Err(Error::numeric(format!(
                "Monte Carlo draw {}: {} result values, the first draw had {}",
                d + 1,
                r.data.len(),
                mean.len()
            )));
        }
        // Welford's update, per value (real and imaginary parts together)
        let n = (d + 1) as f64;
        for ((m, s), x) in mean.iter_mut().zip(&mut m2).zip(&r.data) {
            let delta = *x - *m;
            *m += delta / n;
            *s += (delta * (*x - *m).conj()).re;
        }
        observe(d, &r);
    }
    let nf = mc.draws as f64;
    Ok(McResult {
        draws: mc.draws,
        seed: mc.seed,
        mean,
        std: m2.iter().map(|s| (s / (nf - 1.0)).sqrt()).collect(),
    })
}

/// Monte Carlo of [`couple`].
pub fn couple_monte_carlo(
    components: &[FrfSet],
    uncertainties: &[Option<&FrfUncertainty>],
    joints: &[Joint],
    opts: &CouplingOptions,
    mc: McOptions,
) -> Result<McResult> {
    monte_carlo_with(
        components,
        uncertainties,
        mc,
        &|sets| couple(sets, joints, opts).map(|a| a.set),
        &mut |_, _| {},
    )
}

/// Monte Carlo of [`decouple`].
pub fn decouple_monte_carlo(
    assembly: &FrfSet,
    u_assembly: Option<&FrfUncertainty>,
    removed: &FrfSet,
    u_removed: Option<&FrfUncertainty>,
    joints: &[Joint],
    opts: &CouplingOptions,
    mc: McOptions,
) -> Result<McResult> {
    monte_carlo_with(
        &[assembly.clone(), removed.clone()],
        &[u_assembly, u_removed],
        mc,
        &|sets| decouple(&sets[0], &sets[1], joints, opts).map(|a| a.set),
        &mut |_, _| {},
    )
}
