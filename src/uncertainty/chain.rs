//! First-order propagation through the chain operations: cascade, sum of
//! paths and the operational response. Inputs are independent, errors
//! circular (see [`super::model`]); the result's value is that of the
//! operation itself, which each function calls first (so its checks and
//! errors are the operation's).
//!
//! * cascade H = S·F: u_H,ij² = Σ_r |S_ir|² u_F,rj² + u_S,ir² |F_rj|²
//!   (the product term u_S² u_F², second order, left out).
//! * sum H = Σ Hₙ: u² = Σ uₙ² (exact).
//! * response y_i = Σ_j H_ij f_j (peak, RMS): u_y,i² = Σ_j |f_j|² u_H,ij² +
//!   |H_ij|² u_f,j²; y_i = Σ_j |H_ij|² S_j (autopower, PSD):
//!   u_y,i² = Σ_j 2 |H_ij|² S_j² u_H,ij² + |H_ij|⁴ u_S,j² (δ|H|² =
//!   2 Re(H̄ δH), whose variance is 2|H|²u² for a circular δH).
//! * kind conversion by (iω)ⁿ: u times ωⁿ (exact); by inversion Z = Y⁻¹:
//!   δZ = −Z δY Z, so u_Z,ij² = Σ_ab |Z_ia|² u_Y,ab² |Z_bj|².
//! * selection: the same selection of the uncertainties (exact).

use super::model::FrfUncertainty;
use crate::error::Result;
use crate::frf::FrfSet;

fn squares(s: &FrfSet, u: Option<&FrfUncertainty>) -> Result<Vec<f64>> {
    match u {
        None => Ok(vec![0.0; s.data.len()]),
        Some(u) => {
            u.check_fits(s)?;
            Ok(u.std.iter().map(|v| v * v).collect())
        }
    }
}

fn method(parts: &[(&FrfSet, Option<&FrfUncertainty>)], what: &str) -> String {
    let m: Vec<String> = parts
        .iter()
        .filter_map(|(s, u)| u.map(|u| format!("'{}': {}", s.name, u.method)))
        .collect();
    format!("first order through {what} of ({})", m.join("; "))
}

/// [`crate::assemble::cascade`] with its first-order uncertainty.
pub fn cascade_first_order(
    first: &FrfSet,
    u_first: Option<&FrfUncertainty>,
    second: &FrfSet,
    u_second: Option<&FrfUncertainty>,
) -> Result<(FrfSet, FrfUncertainty)> {
    let out = crate::assemble::cascade(first, second)?;
    let (uf, us) = (squares(first, u_first)?, squares(second, u_second)?);
    // the cascade has checked that every input of `second` is an output of `first`
    let map: Vec<usize> = second
        .inputs
        .iter()
        .map(|d| first.out_place(d).unwrap_or(usize::MAX))
        .collect();
    let (no, nr, ni, nf) = (second.n_out(), second.n_in(), first.n_in(), first.n_out());
    let mut std = vec![0.0; out.data.len()];
    for k in 0..out.n_lines() {
        for i in 0..no {
            for j in 0..ni {
                let mut v = 0.0;
                for (r, &p) in map.iter().enumerate() {
                    if p == usize::MAX {
                        continue;
                    }
                    let s = (k * no + i) * nr + r;
                    let f = (k * nf + p) * ni + j;
                    v += second.data[s].norm_sqr() * uf[f] + us[s] * first.data[f].norm_sqr();
                }
                std[(k * no + i) * ni + j] = v.sqrt();
            }
        }
    }
    let m = method(&[(first, u_first), (second, u_second)], "a cascade");
    Ok((out, FrfUncertainty { std, method: m }))
}

/// [`crate::assemble::sum_paths`] with its uncertainty (exact for a sum).
pub fn sum_first_order(
    sets: &[FrfSet],
    uncertainties: &[Option<&FrfUncertainty>],
) -> Result<(FrfSet, FrfUncertainty)> {
    let out = crate::assemble::sum_paths(sets)?;
    let mut var = vec![0.0; out.data.len()];
    for (s, u) in sets.iter().zip(uncertainties) {
        for (a, b) in var.iter_mut().zip(squares(s, *u)?) {
            *a += b;
        }
    }
    let nan = out.present.len();
    let std = var
        .iter()
        .enumerate()
        .map(|(x, v)| {
            if out.present[x % nan.max(1)] {
                v.sqrt()
            } else {
                f64::NAN
            }
        })
        .collect();
    let parts: Vec<(&FrfSet, Option<&FrfUncertainty>)> = sets
        .iter()
        .zip(uncertainties)
        .map(|(s, u)| (s, *u))
        .collect();
    Ok((
        out,
        FrfUncertainty {
            std,
            method: method(&parts, "a sum of paths").replacen("first order", "exactly", 1),
        },
    ))
}

/// [`crate::predict::operational_response`] with its first-order uncertainty.
pub fn respond_first_order(
    frf: &FrfSet,
    u_frf: Option<&FrfUncertainty>,
    exc: &FrfSet,
    u_exc: Option<&FrfUncertainty>,
) -> Result<(FrfSet, FrfUncertainty)> {
    let y = crate::predict::operational_response(frf, exc)?;
    let std = response_std(frf, u_frf, exc, u_exc, &|_| true)?;
    let what = method(&[(frf, u_frf), (exc, u_exc)], "the response");
    Ok((y, FrfUncertainty { std, method: what }))
}

/// The first-order uncertainty of each path's contribution: path `p` is
/// the response to the excitation's rows `paths[p]` (indices of
/// `exc.outputs`) alone, lines × targets as the response. Paths through
/// different inputs draw on different values, so their errors are
/// independent.
pub fn paths_first_order(
    frf: &FrfSet,
    u_frf: Option<&FrfUncertainty>,
    exc: &FrfSet,
    u_exc: Option<&FrfUncertainty>,
    paths: &[Vec<usize>],
) -> Result<Vec<FrfUncertainty>> {
    let what = method(&[(frf, u_frf), (exc, u_exc)], "a path's contribution");
    paths
        .iter()
        .map(|cols| {
            Ok(FrfUncertainty {
                std: response_std(frf, u_frf, exc, u_exc, &|r| cols.contains(&r))?,
                method: what.clone(),
            })
        })
        .collect()
}

/// The response's standard uncertainty per line and output, summed over
/// the excitation's rows `r` with `through(r)` (see the module's formulas).
fn response_std(
    frf: &FrfSet,
    u_frf: Option<&FrfUncertainty>,
    exc: &FrfSet,
    u_exc: Option<&FrfUncertainty>,
    through: &dyn Fn(usize) -> bool,
) -> Result<Vec<f64>> {
    let coherent = crate::predict::check_pair(frf, exc)?.has_phase();
    let m = crate::predict::match_inputs(frf, exc)?;
    let (uh, ue) = (squares(frf, u_frf)?, squares(exc, u_exc)?);
    let (no, ni) = (frf.n_out(), frf.n_in());
    let mut std = vec![0.0; frf.n_lines() * no];
    for k in 0..frf.n_lines() {
        for i in 0..no {
            let mut v = 0.0;
            for (r, &(j, _)) in m.iter().enumerate() {
                if !through(r) {
                    continue;
                }
                let x = (k * no + i) * ni + j;
                let h2 = frf.data[x].norm_sqr();
                let f = exc.get(k, r, 0);
                let ux = ue[k * exc.n_out() + r];
                v += if coherent {
                    f.norm_sqr() * uh[x] + h2 * ux
                } else {
                    2.0 * h2 * f.re * f.re * uh[x] + h2 * h2 * ux
                };
            }
            std[k * no + i] = v.sqrt();
        }
    }
    Ok(std)
}

/// `set.to_kind(kind)` with its first-order uncertainty.
pub fn convert_first_order(
    set: &FrfSet,
    u: &FrfUncertainty,
    kind: &str,
) -> Result<(FrfSet, FrfUncertainty)> {
    u.check_fits(set)?;
    let out = set.to_kind(kind)?;
    let order = |q: crate::units::Quantity| q.motion_order().unwrap_or(0);
    let (mid, mut std) = if set.out_qty.is_motion() == out.out_qty.is_motion() {
        (set.clone(), u.std.clone())
    } else {
        // the inversion first (to_kind inverts, then changes the order)
        let z = set.invert()?;
        let n = z.n_out();
        let mut std = vec![0.0; z.data.len()];
        for k in 0..z.n_lines() {
            for i in 0..n {
                for j in 0..n {
                    let mut v = 0.0;
                    for a in 0..n {
                        for b in 0..n {
                            let ub = u.std[set.idx(k, a, b)];
                            v += z.get(k, i, a).norm_sqr() * ub * ub * z.get(k, b, j).norm_sqr();
                        }
                    }
                    std[z.idx(k, i, j)] = v.sqrt();
                }
            }
        }
        (z, std)
    };
    let p = (order(out.out_qty) - order(mid.out_qty)) - (order(out.in_qty) - order(mid.in_qty));
    if p != 0 {
        let nm = mid.n_out() * mid.n_in();
        for k in 0..mid.n_lines() {
            let f = mid.omega(k).powi(p);
            for v in &mut std[k * nm..(k + 1) * nm] {
                *v *= f;
            }
        }
    }
    let method = format!("{} through a conversion to {}", u.method, out.kind().name());
    Ok((out, FrfUncertainty { std, method }))
}

/// The uncertainty of a selection of `set` made by `select` (the same
/// function applied to the uncertainties, so the one selection rule decides).
pub fn select_uncertainty(
    set: &FrfSet,
    u: &FrfUncertainty,
    select: &dyn Fn(&FrfSet) -> Result<FrfSet>,
) -> Result<FrfUncertainty> {
    u.check_fits(set)?;
    let mut carrier = set.clone();
    for (d, s) in carrier.data.iter_mut().zip(&u.std) {
        *d = num_complex::Complex64::new(*s, 0.0);
    }
    let picked = select(&carrier)?;
    Ok(FrfUncertainty {
        std: picked.data.iter().map(|v| v.re.abs()).collect(),
        method: u.method.clone(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Dof, SignalKind};
    use crate::units::Quantity;
    use num_complex::Complex64;

    fn dof(s: &str) -> Dof {
        Dof::parse(s, "").unwrap()
    }

    fn frf(outs: &[&str], ins: &[&str], vals: &[Complex64]) -> FrfSet {
        let mut s = FrfSet::zeros(
            "h",
            vec![10.0],
            outs.iter().map(|d| dof(d)).collect(),
            ins.iter().map(|d| dof(d)).collect(),
            Quantity::Velocity,
            Quantity::Force,
        );
        s.data = vals.to_vec();
        s
    }

    fn u(v: &[f64]) -> FrfUncertainty {
        FrfUncertainty {
            std: v.to_vec(),
            method: "given".into(),
        }
    }

    #[test]
    fn sum_of_independent_paths_adds_variances() {
        // the check: for a sum of independent paths the variance is the analytic sum
        let a = frf(&["p:1"], &["s:1+Z"], &[Complex64::new(1.0, 2.0)]);
        let b = frf(&["p:1"], &["s:1+Z"], &[Complex64::new(-3.0, 0.5)]);
        let (s, us) = sum_first_order(&[a, b], &[Some(&u(&[0.3])), Some(&u(&[0.4]))]).unwrap();
        assert_eq!(s.data[0], Complex64::new(-2.0, 2.5));
        assert!((us.std[0] - 0.5).abs() < 1e-15);
        assert!(us.method.starts_with("exactly"));
    }

    #[test]
    fn coherent_response_hand_worked() {
        // y = h1 f1 + h2 f2; u_y² = |f1|² u_h1² + |h1|² u_f1² + |f2|² u_h2² (f2 exact)
        let h = frf(
            &["p:1"],
            &["s:1+Z", "s:2+Z"],
            &[Complex64::new(3.0, 4.0), Complex64::new(0.0, 1.0)],
        );
        let mut f = FrfSet::zeros(
            "f",
            vec![10.0],
            vec![dof("s:1+Z"), dof("s:2+Z")],
            vec![Dof::scalar("", "ref")],
            Quantity::Force,
            Quantity::Dimensionless,
        );
        f.signal = Some(SignalKind::Peak);
        f.data = vec![Complex64::new(2.0, 0.0), Complex64::new(0.0, -1.0)];
        let (y, uy) =
            respond_first_order(&h, Some(&u(&[0.1, 0.2])), &f, Some(&u(&[0.05, 0.0]))).unwrap();
        assert_eq!(y.data[0], Complex64::new(7.0, 8.0));
        // 4·0.01 + 25·0.0025 + 1·0.04 = 0.1425
        assert!((uy.std[0] - 0.1425f64.sqrt()).abs() < 1e-15);
    }

    #[test]
    fn inversion_of_a_scalar_and_order_change() {
        // Z = 1/Y: u_Z = u_Y / |Y|² (δ(1/Y) = −δY / Y²); mobility → impedance
        let y = frf(&["a:1+Z"], &["a:1+Z"], &[Complex64::new(0.0, 2.0)]);
        let (z, uz) = convert_first_order(&y, &u(&[0.1]), "impedance").unwrap();
        assert_eq!(z.data[0], Complex64::new(0.0, -0.5));
        assert!((uz.std[0] - 0.1 / 4.0).abs() < 1e-15);
        // mobility → accelerance: times iω, u times ω
        let (_, ua) = convert_first_order(&y, &u(&[0.1]), "accelerance").unwrap();
        assert!((ua.std[0] - 0.1 * y.omega(0)).abs() < 1e-12);
        // receptance ← mobility ÷ iω, dynamic stiffness: the order change after the inversion
        let (_, uk) = convert_first_order(&y, &u(&[0.1]), "dynamic-stiffness").unwrap();
        assert!((uk.std[0] - 0.025 * y.omega(0)).abs() < 1e-12);
    }

    #[test]
    fn cascade_hand_worked() {
        // H = s · f with one intermediate DOF: u² = |s|² u_f² + u_s² |f|²
        let f = frf(&["m:1+Z"], &["s:1+Z"], &[Complex64::new(0.0, 2.0)]);
        let mut s = frf(&["p:1"], &["m:1+Z"], &[Complex64::new(1.0, 1.0)]);
        s.out_qty = Quantity::Pressure;
        s.in_qty = Quantity::Velocity;
        let (h, uh) = cascade_first_order(&f, Some(&u(&[0.1])), &s, Some(&u(&[0.3]))).unwrap();
        assert_eq!(h.data[0], Complex64::new(-2.0, 2.0));
        // 2 · 0.01 + 0.09 · 4 = 0.38
        assert!((uh.std[0] - 0.38f64.sqrt()).abs() < 1e-15);
    }
}
