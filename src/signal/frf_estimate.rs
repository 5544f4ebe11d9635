//! FRFs from averaged force and response spectra: H1, H2, Hv, coherence.
//!
//! With F the input (force) spectra and X a response, per line (E the
//! Welch mean, ᴴ the conjugate transpose, e^{+iωt} so X = H F):
//! - S_ff = E[F Fᴴ] (inputs × inputs), S_xf = E[X Fᴴ], S_xx = E[|X|²];
//! - **H1** = S_xf S_ff⁻¹: unbiased by noise on the responses, biased low by
//!   noise on the inputs; with several inputs it needs S_ff regular (the
//!   inputs not fully correlated at any line; refused naming the line);
//! - **H2** = S_xx / S_fx, one input only: unbiased by input noise, biased
//!   high by response noise, |H2| = |H1| / γ² (Bendat & Piersol, *Random
//!   Data*, 4th ed., 2010, §9.2);
//! - **Hv**: the total-least-squares estimate, from the eigenvector of the
//!   smallest eigenvalue of E[[F; X][F; X]ᴴ] per response, which lies between
//!   H1 and H2 in magnitude for one input; it weights the noise of the inputs
//!   and responses alike in the units of the data (SI), so it is a choice,
//!   not a correction;
//! - **coherence** on the set: the multiple coherence of each response
//!   γ²ₘ = S_xf S_ff⁻¹ S_fx / S_xx, stored on every input column of that
//!   response; with one input it is the ordinary coherence
//!   |S_xf|² / (S_ff S_xx). [`ordinary_coherence`] gives the ordinary one of
//!   each pair.
//!
//! The DC line (0 Hz) is left out: after detrending it holds no signal.

use super::welch::Averaged;
use super::Channel;
use crate::error::{Error, Result};
use crate::frf::{FrfSet, Provenance};
use crate::units::Quantity;
use nalgebra::DMatrix;
use num_complex::Complex64;

/// The FRF estimator.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Estimator {
    H1,
    H2,
    Hv,
}

impl Estimator {
    pub fn parse(text: &str) -> Result<Estimator> {
        match text.trim().to_ascii_lowercase().as_str() {
            "h1" => Ok(Estimator::H1),
            "h2" => Ok(Estimator::H2),
            "hv" => Ok(Estimator::Hv),
            _ => Err(Error::usage(format!(
                "unknown FRF estimator '{}'; expected h1, h2 or hv",
                crate::error::quote(text)
            ))),
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Estimator::H1 => "H1",
            Estimator::H2 => "H2",
            Estimator::Hv => "Hv",
        }
    }
}

struct Line {
    sff: DMatrix<Complex64>,
    /// outputs × inputs
    sxf: DMatrix<Complex64>,
    sxx: Vec<f64>,
}

fn line(a: &Averaged, k: usize, inputs: &[usize], outputs: &[usize]) -> Result<Line> {
    let refs: Vec<usize> = inputs
        .iter()
        .map(|&c| {
            a.ref_index(c)
                .ok_or_else(|| Error::internal(format!("input channel {c} was not a reference")))
        })
        .collect::<Result<_>>()?;
    let ni = inputs.len();
    let no = outputs.len();
    // S_ff[i][j] = E[F_i conj(F_j)] = cross(ref j, channel i)
    let sff = DMatrix::from_fn(ni, ni, |i, j| a.cross(k, refs[j], inputs[i]));
    let sxf = DMatrix::from_fn(no, ni, |o, j| a.cross(k, refs[j], outputs[o]));
    let sxx = outputs.iter().map(|&c| a.auto(k, c)).collect();
    Ok(Line { sff, sxf, sxx })
}

/// Ordinary coherence |S_xf|² / (S_ff S_xx), lines (without 0 Hz) ×
/// outputs × inputs, frequency-major like an [`FrfSet`].
pub fn ordinary_coherence(a: &Averaged, inputs: &[usize], outputs: &[usize]) -> Result<Vec<f64>> {
    let mut v = Vec::with_capacity((a.freqs.len() - 1) * inputs.len() * outputs.len());
    for k in 1..a.freqs.len() {
        let l = line(a, k, inputs, outputs)?;
        for o in 0..outputs.len() {
            for j in 0..inputs.len() {
                let d = l.sff[(j, j)].re * l.sxx[o];
                v.push(if d > 0.0 {
                    l.sxf[(o, j)].norm_sqr() / d
                } else {
                    f64::NAN
                });
            }
        }
    }
    Ok(v)
}

/// FRF sets (one per response quantity) from the averages `a`, whose
/// `refs` must hold every input channel. `inputs` and `outputs` index
/// `channels`; the inputs share one quantity.
pub fn estimate(
    a: &Averaged,
    channels: &[Channel],
    inputs: &[usize],
    outputs: &[usize],
    estimator: Estimator,
    name: &str,
    source: &Provenance,
) -> Result<Vec<FrfSet>> {
    if inputs.is_empty() || outputs.is_empty() {
        return Err(Error::usage(
            "an FRF estimate needs at least one input (force) and one response channel",
        ));
    }
    let in_qty = channels[inputs[0]].quantity;
    if let Some(&c) = inputs.iter().find(|&&c| channels[c].quantity != in_qty) {
        return Err(Error::usage(format!(
            "input channels measure different quantities: {} is {}, {} is {}",
            channels[inputs[0]].dof,
            in_qty.name(),
            channels[c].dof,
            channels[c].quantity.name()
        ))
        .field("inputs"));
    }
    if let Some(&c) = outputs.iter().find(|c| inputs.contains(c)) {
        return Err(Error::usage(format!(
            "channel {} is both an input and a response",
            channels[c].dof
        )));
    }
    if estimator == Estimator::H2 && inputs.len() > 1 {
        return Err(Error::usage(format!(
            "H2 is computed here for one input; {} inputs were given (use H1 or Hv)",
            inputs.len()
        ))
        .field("estimator"));
    }
    let ni = inputs.len();
    let no = outputs.len();
    let lines = a.freqs.len();
    if lines < 2 {
        return Err(Error::usage("the segment gives no line above 0 Hz").field("segment"));
    }
    let mut h = vec![Complex64::new(0.0, 0.0); (lines - 1) * no * ni];
    let mut coh = vec![0.0; (lines - 1) * no * ni];
    for k in 1..lines {
        let f = a.freqs[k];
        let l = line(a, k, inputs, outputs)?;
        // H1 and the multiple coherence: H1ᵀ = S_ffᵀ⁻¹ S_xfᵀ
        let h1t = l.sff.transpose().lu().solve(&l.sxf.transpose());
        let Some(h1t) = h1t.filter(|m| m.iter().all(|v| v.re.is_finite() && v.im.is_finite()))
        else {
            return Err(Error::numeric(format!(
                "the inputs' cross-spectral matrix is singular at {f} Hz (an input without signal there, or inputs fully correlated); an FRF cannot be estimated"
            )));
        };
        for o in 0..no {
            let mut num = 0.0;
            for j in 0..ni {
                num += (h1t[(j, o)] * l.sxf[(o, j)].conj()).re;
            }
            let gm = if l.sxx[o] > 0.0 {
                num / l.sxx[o]
            } else {
                f64::NAN
            };
            let base = ((k - 1) * no + o) * ni;
            for j in 0..ni {
                coh[base + j] = gm;
                h[base + j] = match estimator {
                    Estimator::H1 => h1t[(j, o)],
                    Estimator::H2 => {
                        let sfx = l.sxf[(o, 0)].conj();
                        if sfx.norm() == 0.0 {
                            return Err(Error::numeric(format!(
                                "the cross spectrum of {} and {} is zero at {f} Hz; H2 is undefined there",
                                channels[outputs[o]].dof, channels[inputs[0]].dof
                            )));
                        }
                        Complex64::new(l.sxx[o], 0.0) / sfx
                    }
                    Estimator::Hv => Complex64::new(f64::NAN, 0.0),
                };
            }
            if estimator == Estimator::Hv {
                let hv = total_least_squares(&l, o).ok_or_else(|| {
                    Error::numeric(format!(
                        "Hv is undefined at {f} Hz for {}: the smallest eigenvector has no response part",
                        channels[outputs[o]].dof
                    ))
                })?;
                h[base..base + ni].copy_from_slice(&hv);
            }
        }
    }
    // one set per response quantity
    let mut groups: Vec<(Quantity, Vec<usize>)> = Vec::new();
    for (o, &c) in outputs.iter().enumerate() {
        match groups.iter_mut().find(|(q, _)| *q == channels[c].quantity) {
            Some((_, v)) => v.push(o),
            None => groups.push((channels[c].quantity, vec![o])),
        }
    }
    let several = groups.len() > 1;
    let mut prov = source.clone();
    let what = format!(
        "{} estimate; {}",
        estimator.name(),
        super::spectra::describe_averaging(a)
    );
    prov.options = if prov.options.is_empty() {
        what
    } else {
        format!("{}; {what}", prov.options)
    };
    let mut sets = Vec::new();
    for (q, members) in groups {
        let set_name = if several {
            format!("{name} {}", q.name())
        } else {
            name.to_string()
        };
        let mut s = FrfSet::zeros(
            &set_name,
            a.freqs[1..].to_vec(),
            members
                .iter()
                .map(|&o| channels[outputs[o]].dof.clone())
                .collect(),
            inputs.iter().map(|&c| channels[c].dof.clone()).collect(),
            q,
            in_qty,
        );
        let m = members.len();
        let mut cv = vec![0.0; (lines - 1) * m * ni];
        for k in 0..lines - 1 {
            for (i, &o) in members.iter().enumerate() {
                for j in 0..ni {
                    s.set(k, i, j, h[(k * no + o) * ni + j]);
                    cv[(k * m + i) * ni + j] = coh[(k * no + o) * ni + j];
                }
            }
        }
        s.coherence = Some(cv);
        s.provenance = vec![prov.clone()];
        sets.push(s);
    }
    Ok(sets)
}

/// Hv of response `o`: the eigenvector u of the smallest eigenvalue of
/// C = E[[F; X][F; X]ᴴ]; with a = [−H, 1] minimizing a C aᴴ / a aᴴ,
/// aᴴ ∥ u, so H = −conj(u_F / u_X).
fn total_least_squares(l: &Line, o: usize) -> Option<Vec<Complex64>> {
    let ni = l.sff.nrows();
    let c = DMatrix::from_fn(ni + 1, ni + 1, |i, j| match (i < ni, j < ni) {
        (true, true) => l.sff[(i, j)],
        // E[F_i conj(X)]
        (true, false) => l.sxf[(o, i)].conj(),
        // E[X conj(F_j)]
        (false, true) => l.sxf[(o, j)],
        (false, false) => Complex64::new(l.sxx[o], 0.0),
    });
    let eig = nalgebra::SymmetricEigen::new(c);
    let (imin, _) = eig
        .eigenvalues
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))?;
    let u = eig.eigenvectors.column(imin);
    let ux = u[ni];
    if ux.norm() == 0.0 {
        return None;
    }
    Some((0..ni).map(|j| -(u[j] / ux).conj()).collect())
}
