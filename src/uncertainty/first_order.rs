//! First-order (linearized) propagation of FRF uncertainty through LM-FBS
//! coupling and decoupling.
//!
//! With Z = B_u Y B_fᵀ + Γ and Y_c = Y − Y B_fᵀ Z⁻¹ B_u Y (the form of
//! [`crate::assemble`]), a small change δY of the block-diagonal Y changes
//! the result by
//!
//! δY_c = L δY R,  L = I − Y B_fᵀ Z⁻¹ B_u,  R = I − B_fᵀ Z⁻¹ B_u Y
//!
//! (product rule and δ(Z⁻¹) = −Z⁻¹ δZ Z⁻¹; the linearization of Meggitt,
//! Elliott, Moorhouse, "Uncertainty propagation in frequency based
//! substructuring", 2016, written for the LM-FBS form). Y_c is a holomorphic
//! function of Y, so with independent circular errors of the entries
//! (E|δY_ab|² = u_ab², see [`super::model`]) each result value has
//! u_c,ij² = Σ_ab |L_ia|² u_ab² |R_bj|², and stays circular. Joint
//! parameters are taken as exact. The result's rows are L's, its columns R's;
//! a removed part (decoupling) enters Y as −Y_removed, which changes no
//! variance. The truncated-SVD solve is not linearized: the propagation
//! refuses a coupling that asks for it (the Monte Carlo takes it).

use super::model::FrfUncertainty;
use crate::assemble::{prepare_coupling, prepare_decoupling, CouplingOptions, Joint, Prepared};
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use nalgebra::DMatrix;
use num_complex::Complex64;

/// What the first-order propagation gives per result value (layout of the
/// coupled set's data).
#[derive(Debug, Clone, PartialEq)]
pub struct FirstOrder {
    /// The result's standard uncertainties.
    pub uncertainty: FrfUncertainty,
    /// Cancellation per value: the larger of |Y_ij| and |(Y B_fᵀ Z⁻¹ B_u Y)_ij|
    /// divided by |Y_c,ij| (1 when nothing cancels; 10 when the result is
    /// 20 dB below the terms it is the difference of). NaN where missing.
    pub cancellation: Vec<f64>,
    /// Per value, the largest relative uncertainty u/|H| of the input values
    /// its formula reads (its own entry, the interface columns of its row,
    /// the interface rows of its column, every entry of the interface
    /// matrix), each as its median over five neighbouring lines. Near or
    /// above 1 the linearization is not valid there: an input is below its
    /// noise. NaN where missing.
    pub input_relative: Vec<f64>,
}

/// First-order uncertainty of [`crate::assemble::couple`]'s result.
/// `uncertainties[n]` belongs to `components[n]` (`None`: taken as exact).
pub fn couple_first_order(
    components: &[FrfSet],
    uncertainties: &[Option<&FrfUncertainty>],
    joints: &[Joint],
    opts: &CouplingOptions,
) -> Result<FirstOrder> {
    let refs: Vec<&FrfSet> = components.iter().collect();
    let prep = prepare_coupling(&refs, joints, opts)?;
    propagate(&prep, &refs, uncertainties, opts)
}

/// First-order uncertainty of [`crate::assemble::decouple`]'s result.
pub fn decouple_first_order(
    assembly: &FrfSet,
    u_assembly: Option<&FrfUncertainty>,
    removed: &FrfSet,
    u_removed: Option<&FrfUncertainty>,
    joints: &[Joint],
    opts: &CouplingOptions,
) -> Result<FirstOrder> {
    let prep = prepare_decoupling(assembly, removed, joints, opts)?;
    propagate(&prep, &[assembly, removed], &[u_assembly, u_removed], opts)
}

impl FirstOrder {
    /// The values of the rows `outputs` and columns `inputs` (matched by
    /// place; a sign-flipped label has the same standard uncertainty) of a
    /// first order whose set has the rows `all_outputs` and columns
    /// `all_inputs`: what a demand-driven coupling's result, which holds
    /// only those, carries.
    pub fn select(
        &self,
        all_outputs: &[Dof],
        all_inputs: &[Dof],
        outputs: &[Dof],
        inputs: &[Dof],
    ) -> Result<FirstOrder> {
        let find = |all: &[Dof], want: &[Dof]| -> Result<Vec<usize>> {
            want.iter()
                .map(|w| {
                    all.iter().position(|a| a.same_place(w)).ok_or_else(|| {
                        Error::usage(format!("the first order has no DOF {w} to select"))
                    })
                })
                .collect()
        };
        let (ro, ci) = (find(all_outputs, outputs)?, find(all_inputs, inputs)?);
        let (no, ni) = (all_outputs.len(), all_inputs.len());
        let nl = self.uncertainty.std.len() / (no * ni).max(1);
        if nl * no * ni != self.uncertainty.std.len() {
            return Err(Error::internal(format!(
                "a first order of {} values is not {no} × {ni} per line",
                self.uncertainty.std.len()
            )));
        }
        let pick = |v: &[f64]| -> Vec<f64> {
            let mut out = Vec::with_capacity(nl * ro.len() * ci.len());
            for k in 0..nl {
                for &o in &ro {
                    for &i in &ci {
                        out.push(v[(k * no + o) * ni + i]);
                    }
                }
            }
            out
        };
        Ok(FirstOrder {
            uncertainty: FrfUncertainty {
                std: pick(&self.uncertainty.std),
                method: self.uncertainty.method.clone(),
            },
            cancellation: pick(&self.cancellation),
            input_relative: pick(&self.input_relative),
        })
    }
}

fn propagate(
    p: &Prepared,
    originals: &[&FrfSet],
    uncertainties: &[Option<&FrfUncertainty>],
    opts: &CouplingOptions,
) -> Result<FirstOrder> {
    if opts.tsvd_rel_threshold.is_some() {
        return Err(Error::usage(
            "the first-order propagation linearizes the plain interface solve; with a truncated SVD use the Monte Carlo propagation",
        )
        .field("tsvd"));
    }
    if opts.per_line.is_some() {
        return Err(Error::usage(
            "the first-order propagation linearizes the plain interface solve; with a regularised inversion (truncated SVD or Tikhonov) use the Monte Carlo propagation",
        )
        .field("tikhonov"));
    }
    if uncertainties.len() != originals.len() {
        return Err(Error::usage(format!(
            "{} uncertainties for {} components; give one (or none) per component",
            uncertainties.len(),
            originals.len()
        )));
    }
    // each part's uncertainty in the working motion order
    let order = |s: &FrfSet| s.out_qty.motion_order().unwrap_or(0);
    let target = order(&p.sets[0]);
    let mut u2: Vec<Option<Vec<f64>>> = Vec::with_capacity(originals.len());
    for (s, u) in originals.iter().zip(uncertainties) {
        u2.push(match u {
            None => None,
            Some(u) => {
                u.check_fits(s)?;
                let r = u.reordered(s, order(s), target);
                Some(
                    r.std
                        .iter()
                        .map(|v| if v.is_nan() { 0.0 } else { v * v })
                        .collect(),
                )
            }
        });
    }

    // relative uncertainty u/|H| of every input value (0 without
    // uncertainty), as the median over the line and its two neighbours on
    // each side: judged on single noisy lines, a value that is pure noise
    // looks above its noise too often (see `reliability`)
    let rel: Vec<Vec<f64>> = p
        .sets
        .iter()
        .zip(&u2)
        .map(|(s, u)| match u {
            None => vec![0.0; s.data.len()],
            Some(u) => local_median(s, &relative_of(&s.data, u)),
        })
        .collect();
    let nparts = p.sets.len();
    let (mut grow, mut gcol) = (vec![0usize; nparts], vec![0usize; nparts]);
    let (mut gr, mut gc) = (0, 0);
    for q in 0..nparts {
        grow[q] = gr;
        gcol[q] = gc;
        gr += p.sets[q].n_out();
        gc += p.sets[q].n_in();
    }
    let m = p.ends.len();
    let (nr, nc) = (p.n_rows, p.n_cols);
    let nl = p.sets[0].n_lines();
    let zero = Complex64::new(0.0, 0.0);
    let mut std = vec![f64::NAN; nl * nr * nc];
    let mut cancellation = vec![f64::NAN; nl * nr * nc];
    let mut input_relative = vec![f64::NAN; nl * nr * nc];
    // result row a / column c → (part, local index)
    let row_part: Vec<(usize, usize)> = p
        .res
        .iter()
        .flat_map(|&q| (0..p.sets[q].n_out()).map(move |i| (q, i)))
        .collect();
    let col_part: Vec<(usize, usize)> = p
        .res
        .iter()
        .flat_map(|&q| (0..p.sets[q].n_in()).map(move |j| (q, j)))
        .collect();
    // B_u (m × gr) and B_f (m × gc), fixed over lines
    let mut bu = DMatrix::from_element(m, gr, zero);
    let mut bf = DMatrix::from_element(m, gc, zero);
    for (r, row) in p.ends.iter().enumerate() {
        for e in row {
            bu[(r, grow[e.part] + e.o)] += Complex64::new(e.su, 0.0);
            bf[(r, gcol[e.part] + e.i)] += Complex64::new(e.sf, 0.0);
        }
    }
    // result rows / columns → global rows / columns
    let res_rows: Vec<usize> = p
        .res
        .iter()
        .flat_map(|&q| (0..p.sets[q].n_out()).map(move |i| (q, i)))
        .map(|(q, i)| grow[q] + i)
        .collect();
    let res_cols: Vec<usize> = p
        .res
        .iter()
        .flat_map(|&q| (0..p.sets[q].n_in()).map(move |j| (q, j)))
        .map(|(q, j)| gcol[q] + j)
        .collect();
    let mut y = DMatrix::from_element(gr, gc, zero);
    for k in 0..nl {
        for q in 0..nparts {
            let s = &p.sets[q];
            let l = s.line(k);
            for i in 0..s.n_out() {
                for j in 0..s.n_in() {
                    let v = l[i * s.n_in() + j];
                    // a missing entry the formula does not read stays out
                    y[(grow[q] + i, gcol[q] + j)] = if v.re.is_finite() && v.im.is_finite() {
                        v * p.psign[q]
                    } else {
                        zero
                    };
                }
            }
        }
        let mut z = &bu * &y * bf.transpose();
        for r in 0..m {
            z[(r, r)] += p.gamma[k * m + r];
        }
        let freq = p.sets[0].freqs[k];
        let lu = z.lu();
        let by = &bu * &y; // m × gc
        let x = lu.solve(&by).ok_or_else(|| {
            Error::numeric(format!(
                "the interface matrix at {freq} Hz is singular; the first-order propagation needs it invertible"
            ))
        })?; // Z⁻¹ B_u Y, m × gc
        let zbu = lu.solve(&bu).ok_or_else(|| {
            Error::numeric(format!("the interface matrix at {freq} Hz is singular"))
        })?; // Z⁻¹ B_u, m × gr
        let yb = &y * bf.transpose(); // gr × m
                                      // L restricted to the result rows (nr × gr), R to the result columns (gc × nc)
        let mut lmat = DMatrix::from_element(nr, gr, zero);
        for (a, &g) in res_rows.iter().enumerate() {
            let t = yb.row(g) * &zbu;
            for b in 0..gr {
                lmat[(a, b)] = -t[b];
            }
            lmat[(a, g)] += Complex64::new(1.0, 0.0);
        }
        let mut rmat = DMatrix::from_element(gc, nc, zero);
        let bfx = bf.transpose() * &x; // gc × gc
        for (c, &g) in res_cols.iter().enumerate() {
            for b in 0..gc {
                rmat[(b, c)] = -bfx[(b, g)];
            }
            rmat[(g, c)] += Complex64::new(1.0, 0.0);
        }
        // variances, part by part (δY is block diagonal)
        let mut var = DMatrix::<f64>::zeros(nr, nc);
        for (q, uq) in u2.iter().enumerate() {
            let Some(uq) = uq else { continue };
            let s = &p.sets[q];
            let (no, ni) = (s.n_out(), s.n_in());
            let a = DMatrix::from_fn(nr, no, |i, b| lmat[(i, grow[q] + b)].norm_sqr());
            let u = DMatrix::from_fn(no, ni, |b, c| uq[(k * no + b) * ni + c]);
            let bm = DMatrix::from_fn(ni, nc, |c, j| rmat[(gcol[q] + c, j)].norm_sqr());
            var += a * u * bm;
        }
        // relative input uncertainty each result value reads
        let r_at = |q: usize, i: usize, j: usize| {
            let s = &p.sets[q];
            let v = rel[q][(k * s.n_out() + i) * s.n_in() + j];
            if v.is_nan() {
                0.0
            } else {
                v
            }
        };
        let mut zrel: f64 = 0.0;
        for er in &p.ends {
            for es in &p.ends {
                for e in er {
                    for g in es {
                        if e.part == g.part {
                            zrel = zrel.max(r_at(e.part, e.o, g.i));
                        }
                    }
                }
            }
        }
        let rowrel: Vec<f64> = row_part
            .iter()
            .map(|&(q, i)| {
                p.ends
                    .iter()
                    .flatten()
                    .filter(|g| g.part == q)
                    .map(|g| r_at(q, i, g.i))
                    .fold(zrel, f64::max)
            })
            .collect();
        let colrel: Vec<f64> = col_part
            .iter()
            .map(|&(q, j)| {
                p.ends
                    .iter()
                    .flatten()
                    .filter(|e| e.part == q)
                    .map(|e| r_at(q, e.o, j))
                    .fold(0.0, f64::max)
            })
            .collect();
        // cancellation: Y_c = Y − (Y B_fᵀ) X on the result block
        for (a, &gi) in res_rows.iter().enumerate() {
            let t = yb.row(gi) * &x;
            for (c, &gj) in res_cols.iter().enumerate() {
                let o = (k * nr + a) * nc + c;
                let yv = y[(gi, gj)];
                let yc = yv - t[gj];
                std[o] = var[(a, c)].sqrt();
                let big = yv.norm().max(t[gj].norm());
                cancellation[o] = if big == 0.0 { 1.0 } else { big / yc.norm() };
                let (qa, i) = row_part[a];
                let (qb, j) = col_part[c];
                let own = if qa == qb { r_at(qa, i, j) } else { 0.0 };
                input_relative[o] = rowrel[a].max(colrel[c]).max(own);
            }
        }
    }
    // missing result entries stay NaN (the coupled set's present mask)
    let mut present = Vec::with_capacity(nr * nc);
    for &qa in &p.res {
        let sa = &p.sets[qa];
        for i in 0..sa.n_out() {
            for &qb in &p.res {
                let sb = &p.sets[qb];
                for j in 0..sb.n_in() {
                    present.push(qa != qb || sa.is_present(i, j));
                }
            }
        }
    }
    for (o, ((s, c), r)) in std
        .iter_mut()
        .zip(&mut cancellation)
        .zip(&mut input_relative)
        .enumerate()
    {
        if !present[o % (nr * nc)] {
            *s = f64::NAN;
            *c = f64::NAN;
            *r = f64::NAN;
        }
    }
    let methods: Vec<String> = originals
        .iter()
        .zip(uncertainties)
        .filter_map(|(s, u)| u.map(|u| format!("'{}': {}", s.name, u.method)))
        .collect();
    Ok(FirstOrder {
        uncertainty: FrfUncertainty {
            std,
            method: format!(
                "first-order propagation through the interface inversion of input uncertainties ({})",
                if methods.is_empty() {
                    "none given".to_string()
                } else {
                    methods.join("; ")
                }
            ),
        },
        cancellation,
        input_relative,
    })
}

/// u/|H| per value (u² given): ∞ for an exact zero with noise, 0 without.
fn relative_of(data: &[Complex64], u2: &[f64]) -> Vec<f64> {
    data.iter()
        .zip(u2)
        .map(|(h, v)| {
            let m = h.norm();
            if m > 0.0 {
                v.sqrt() / m
            } else if *v > 0.0 {
                f64::INFINITY
            } else {
                0.0
            }
        })
        .collect()
}

/// Lines on each side of the median window of [`local_median`].
const HALF_WINDOW: usize = 2;

/// Per entry, the median of `v` over lines k − 2 … k + 2 (fewer at the
/// ends of the grid); NaN values are left out.
fn local_median(s: &FrfSet, v: &[f64]) -> Vec<f64> {
    let (nl, nm) = (s.n_lines(), s.n_out() * s.n_in());
    let mut out = vec![f64::NAN; v.len()];
    let mut w: Vec<f64> = Vec::with_capacity(2 * HALF_WINDOW + 1);
    for e in 0..nm {
        for k in 0..nl {
            w.clear();
            let lo = k.saturating_sub(HALF_WINDOW);
            let hi = (k + HALF_WINDOW).min(nl.saturating_sub(1));
            w.extend((lo..=hi).map(|l| v[l * nm + e]).filter(|x| !x.is_nan()));
            if w.is_empty() {
                continue;
            }
            w.sort_by(|a, b| a.total_cmp(b));
            let n = w.len();
            out[k * nm + e] = if n % 2 == 1 {
                w[n / 2]
            } else {
                0.5 * (w[n / 2 - 1] + w[n / 2])
            };
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;
    use crate::units::Quantity;

    #[test]
    fn local_median_over_five_lines() {
        let d = Dof::parse("a:1+Z", "").unwrap();
        let s = FrfSet::zeros(
            "a",
            (0..6).map(|k| 1.0 + k as f64).collect(),
            vec![d.clone()],
            vec![d],
            Quantity::Acceleration,
            Quantity::Force,
        );
        let v = [5.0, 1.0, 9.0, 2.0, 7.0, 3.0];
        // windows: [5,1,9] → 5; [5,1,9,2] → 3.5; [5,1,9,2,7] → 5; [1,9,2,7,3] → 3;
        // [9,2,7,3] → 5; [2,7,3] → 3
        assert_eq!(local_median(&s, &v), vec![5.0, 3.5, 5.0, 3.0, 5.0, 3.0]);
    }
}
