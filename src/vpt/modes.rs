//! The rigid interface modes R of a virtual point: how each channel (or
//! impact) sees the six rigid motions q = (t, θ) of the point's origin o.
//!
//! A translation channel at r along the unit vector e measures
//! u = e·(t + θ × (r − o)) = eᵀ t + ((r − o) × e)ᵀ θ, so its row of R is
//! [eᵀ, ((r − o) × e)ᵀ]; a rotation channel about the axis e measures
//! u = e·θ, row [0ᵀ, eᵀ] (rigid-body kinematics, textbook; the rows as in
//! the virtual point transformation of van der Seijs, van den Bosch, Rixen
//! and de Klerk, COMPDYN 2013, see [`super`]). On the force side the same
//! row maps the virtual point's loads (force, moment) to the work done at an
//! impact: f = R m in the least-squares sense, and m = Rᵀ f exactly.
//!
//! Whether the channels determine all six motions is decided by the
//! singular values of √W R S, S = diag(1, 1, 1, 1/L, 1/L, 1/L) with L the
//! RMS distance of the channels from the origin (so translations and
//! rotations weigh alike), by [`crate::linalg::svd`].

use super::geometry::{Geometry, Located};
use crate::error::{Error, Result};
use crate::linalg::svd::Svd;
use num_complex::Complex64;

/// Singular values below this fraction of the largest (of the scaled,
/// weighted R) count as zero: the motion they belong to is not determined.
/// Rounding in R is about 1e-16; a geometry within 1e-9 of degenerate gives
/// no usable rotation either.
pub const RANK_TOL: f64 = 1e-9;

/// The row of R for one located channel or impact (see the module docs).
pub fn row(l: &Located, origin: [f64; 3]) -> [f64; 6] {
    let e = l.dir;
    if l.rotational {
        return [0.0, 0.0, 0.0, e[0], e[1], e[2]];
    }
    let d = [
        l.at[0] - origin[0],
        l.at[1] - origin[1],
        l.at[2] - origin[2],
    ];
    let m = cross(d, e);
    [e[0], e[1], e[2], m[0], m[1], m[2]]
}

pub(crate) fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// R (rows × 6, row-major) of located channels about `origin`.
pub fn modes(located: &[Located], origin: [f64; 3]) -> Vec<f64> {
    located.iter().flat_map(|l| row(l, origin)).collect()
}

/// The RMS distance of translation channels from the origin (1 m when
/// every one sits at the origin, so the scaling stays defined).
pub fn length_scale(located: &[Located], origin: [f64; 3]) -> f64 {
    let (mut s, mut n) = (0.0, 0usize);
    for l in located.iter().filter(|l| !l.rotational) {
        let d = [
            l.at[0] - origin[0],
            l.at[1] - origin[1],
            l.at[2] - origin[2],
        ];
        s += d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
        n += 1;
    }
    let l = if n > 0 { (s / n as f64).sqrt() } else { 0.0 };
    if l > 0.0 && l.is_finite() {
        l
    } else {
        1.0
    }
}

/// The weighted least-squares inverse of R, T = (RᵀWR)⁻¹RᵀW (6 × rows,
/// row-major), with the SVD of √W R S it came from: T = S V Σ⁻¹ Uᵀ √W.
pub struct Inverse {
    pub t: Vec<f64>,
    /// Singular values of √W R S, largest first.
    pub singular_values: Vec<f64>,
    /// The length scale L of S, metres.
    pub scale: f64,
}

/// A rigid motion that the channels cannot see: translation t (m) and
/// rotation θ (rad per unit) at the origin.
#[derive(Debug, Clone, PartialEq)]
pub struct Unseen {
    pub t: [f64; 3],
    pub theta: [f64; 3],
}

/// T from R, or — when √W R S has fewer than six singular values above
/// [`RANK_TOL`] — the number determined and the motions not seen.
pub fn inverse(
    r: &[f64],
    w: &[f64],
    scale: f64,
) -> Result<std::result::Result<Inverse, (usize, Vec<Unseen>)>> {
    let m = w.len();
    if r.len() != 6 * m {
        return Err(Error::internal("R and its weights differ in length"));
    }
    let sw: Vec<f64> = w.iter().map(|x| x.sqrt()).collect();
    let a: Vec<Complex64> = (0..m)
        .flat_map(|i| {
            let sw = sw[i];
            (0..6).map(move |j| {
                let s = if j < 3 { 1.0 } else { scale };
                Complex64::new(sw * r[i * 6 + j] * s, 0.0)
            })
        })
        .collect();
    // a tall or square matrix has 6 singular values; a wide one fewer
    let svd = Svd::new(&a, m, 6)?;
    let sv = svd.singular_values().to_vec();
    let top = sv.first().copied().unwrap_or(0.0);
    let rank = sv
        .iter()
        .filter(|&&s| s > RANK_TOL * top && s > 0.0)
        .count();
    if rank < 6 {
        // the right singular vectors of the missing values span what R misses;
        // with fewer than 6 rows, complete them from the null space of those found
        let mut basis: Vec<[f64; 6]> = (0..sv.len().min(6))
            .map(|j| {
                let v = svd.v(j);
                std::array::from_fn(|k| v[k].re)
            })
            .collect();
        let seen: Vec<[f64; 6]> = basis.drain(..rank).collect();
        let mut unseen = basis;
        complete_null(&seen, &mut unseen);
        let out = unseen
            .iter()
            .map(|v| Unseen {
                t: [v[0], v[1], v[2]],
                theta: [v[3] * scale, v[4] * scale, v[5] * scale],
            })
            .collect();
        return Ok(Err((rank, out)));
    }
    // T = S V Σ⁻¹ Uᵀ √W
    let mut t = vec![0.0; 6 * m];
    for (j, &sj) in sv.iter().enumerate().take(6) {
        let (u, v) = (svd.u(j), svd.v(j));
        for a in 0..6 {
            let s = if a < 3 { 1.0 } else { scale };
            let va = s * v[a].re / sj;
            if va == 0.0 {
                continue;
            }
            for i in 0..m {
                t[a * m + i] += va * u[i].re * sw[i];
            }
        }
    }
    Ok(Ok(Inverse {
        t,
        singular_values: sv,
        scale,
    }))
}

/// Add orthonormal vectors to `unseen` until `seen` and `unseen` span six
/// dimensions (Gram–Schmidt over the unit vectors).
fn complete_null(seen: &[[f64; 6]], unseen: &mut Vec<[f64; 6]>) {
    for k in 0..6 {
        if seen.len() + unseen.len() >= 6 {
            break;
        }
        let mut v = [0.0; 6];
        v[k] = 1.0;
        for b in seen.iter().chain(unseen.iter()) {
            let d: f64 = (0..6).map(|i| v[i] * b[i]).sum();
            for i in 0..6 {
                v[i] -= d * b[i];
            }
        }
        let n = v.iter().map(|x| x * x).sum::<f64>().sqrt();
        if n > 1e-6 {
            unseen.push(v.map(|x| x / n));
        }
    }
}

/// The motion in words: a translation along a direction, a rotation about
/// an axis through a point, or a screw; lengths in the geometry's unit.
pub fn describe(u: &Unseen, origin: [f64; 3], geom: &Geometry, scale: f64) -> String {
    let nt = norm(u.t);
    let nr = norm(u.theta);
    // compare rotation and translation over the channels' length scale
    if nr * scale < 1e-6 * nt {
        let d = oriented(u.t.map(|x| x / nt));
        return format!("a translation along {}", vec_text(d));
    }
    let a = oriented(u.theta.map(|x| x / nr));
    // the point of the axis nearest the origin: o + (θ × t)/|θ|²
    let c = cross(u.theta, u.t);
    let p = [
        origin[0] + c[0] / (nr * nr),
        origin[1] + c[1] / (nr * nr),
        origin[2] + c[2] / (nr * nr),
    ];
    let pitch = (0..3).map(|i| u.theta[i] * u.t[i]).sum::<f64>() / (nr * nr);
    let at = format!(
        "({}, {}, {}) {}",
        geom.show_len(p[0]),
        geom.show_len(p[1]),
        geom.show_len(p[2]),
        geom.unit
    );
    if pitch.abs() < 1e-6 * scale {
        format!(
            "a rotation about the axis through {at}, direction {}",
            vec_text(a)
        )
    } else {
        format!(
            "a screw motion about the axis through {at}, direction {} (pitch {} {} per rad)",
            vec_text(a),
            geom.show_len(pitch),
            geom.unit
        )
    }
}

fn norm(v: [f64; 3]) -> f64 {
    (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()
}

/// The sign that makes the largest component positive.
fn oriented(v: [f64; 3]) -> [f64; 3] {
    let k = (0..3)
        .max_by(|&a, &b| v[a].abs().total_cmp(&v[b].abs()))
        .unwrap_or(0);
    if v[k] < 0.0 {
        v.map(|x| -x)
    } else {
        v
    }
}

fn vec_text(v: [f64; 3]) -> String {
    let f = |x: f64| {
        let s = format!("{x:.2}");
        if s == "-0.00" {
            "0.00".to_string()
        } else {
            s
        }
    };
    format!("({}, {}, {})", f(v[0]), f(v[1]), f(v[2]))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;

    fn loc(label: &str, at: [f64; 3], dir: [f64; 3]) -> Located {
        let dof = Dof::parse(label, "").unwrap();
        Located {
            rotational: dof.dir.is_rotational(),
            dof,
            at,
            dir,
            row: 0,
        }
    }

    #[test]
    fn rows_are_rigid_body_kinematics() {
        // rigid-body kinematics, textbook: u = e·(t + θ × d), d = r − o
        let o = [0.1, -0.2, 0.05];
        let r = [0.4, 0.3, -0.1];
        let e = [0.6, 0.0, 0.8];
        let l = loc("b:s+X", r, e);
        let row = row(&l, o);
        let q = [1e-3, -2e-3, 0.5e-3, 0.02, -0.01, 0.03];
        let d = [r[0] - o[0], r[1] - o[1], r[2] - o[2]];
        let th = [q[3], q[4], q[5]];
        let rot = cross(th, d);
        let want: f64 = (0..3).map(|i| e[i] * (q[i] + rot[i])).sum();
        let got: f64 = (0..6).map(|i| row[i] * q[i]).sum();
        assert!((got - want).abs() < 1e-17, "{got} {want}");
        // a rotation channel sees only e·θ
        let rr = super::row(&loc("b:s+RY", r, [0.0, 1.0, 0.0]), o);
        let got: f64 = (0..6).map(|i| rr[i] * q[i]).sum();
        assert_eq!(got, q[4]);
    }

    fn triax(at: [f64; 3]) -> Vec<Located> {
        vec![
            loc("b:s+X", at, [1.0, 0.0, 0.0]),
            loc("b:s+Y", at, [0.0, 1.0, 0.0]),
            loc("b:s+Z", at, [0.0, 0.0, 1.0]),
        ]
    }

    #[test]
    fn t_inverts_r() {
        let o = [0.0, 0.0, 0.0];
        let mut ls = triax([0.05, 0.0, 0.0]);
        ls.extend(triax([0.0, 0.04, 0.01]));
        ls.extend(triax([-0.03, -0.02, 0.0]));
        let r = modes(&ls, o);
        let w: Vec<f64> = (0..9).map(|i| 1.0 + 0.1 * i as f64).collect();
        let inv = inverse(&r, &w, length_scale(&ls, o)).unwrap().ok().unwrap();
        // T R = I (the definition of the left inverse)
        for a in 0..6 {
            for b in 0..6 {
                let v: f64 = (0..9).map(|i| inv.t[a * 9 + i] * r[i * 6 + b]).sum();
                let want = if a == b { 1.0 } else { 0.0 };
                assert!((v - want).abs() < 1e-12, "({a},{b}) {v}");
            }
        }
    }

    #[test]
    fn collinear_sensors_miss_the_rotation_about_their_line() {
        let o = [0.0, 0.0, 0.0];
        let mut ls = triax([0.0, 0.0, 0.01]);
        ls.extend(triax([0.0, 0.0, 0.03]));
        ls.extend(triax([0.0, 0.0, -0.02]));
        let r = modes(&ls, o);
        let s = length_scale(&ls, o);
        let Err((rank, unseen)) = inverse(&r, &[1.0; 9], s).unwrap() else {
            panic!("collinear sensors must not determine six motions");
        };
        assert_eq!(rank, 5);
        let g = Geometry::from_rows("mm", &[], &[]).unwrap();
        let t = describe(&unseen[0], o, &g, s);
        assert_eq!(
            t,
            "a rotation about the axis through (0, 0, 0) mm, direction (0.00, 0.00, 1.00)"
        );
        // two channels only: four motions unseen
        let Err((rank, unseen)) = inverse(&r[..12], &[1.0; 2], s).unwrap() else {
            panic!("two channels cannot determine six motions");
        };
        assert_eq!((rank, unseen.len()), (2, 4));
    }
}
