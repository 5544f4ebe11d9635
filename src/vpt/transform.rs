//! The transformation of a set to virtual points: each point's channels and
//! impacts resolved against the set and located in the geometry, T_u and T_f
//! from their rigid interface modes, and Y_qm = T_u Y_uf T_fᵀ applied to the
//! whole set (DOFs of no virtual point kept as they are: identity rows and
//! columns).

use super::consistency::{consistency, VirtualPointReport};
use super::geometry::{Geometry, Located};
use super::modes::{self, Unseen};
use super::VirtualPointDef;
use crate::error::{quote, Error, Result};
use crate::frf::{Direction, Dof, FrfSet};
use crate::units::Quantity;
use num_complex::Complex64;
use std::collections::BTreeMap;

/// The matrices of one virtual point (row-major): R_u (channels × 6),
/// T_u (6 × channels), R_f (impacts × 6), T_f (6 × impacts), with the
/// weights, in the order of `sensors` and `impacts`.
#[derive(Debug, Clone, PartialEq)]
pub struct VpMatrices {
    /// The point's six DOFs, `comp:NAME+X` … `comp:NAME+RZ`.
    pub dofs: Vec<Dof>,
    /// Origin, metres.
    pub origin: [f64; 3],
    pub sensors: Vec<Located>,
    pub impacts: Vec<Located>,
    pub w_u: Vec<f64>,
    pub w_f: Vec<f64>,
    pub r_u: Vec<f64>,
    pub t_u: Vec<f64>,
    pub r_f: Vec<f64>,
    pub t_f: Vec<f64>,
    /// Singular values of √W R S on each side (see [`modes`]).
    pub sensor_singular_values: Vec<f64>,
    pub impact_singular_values: Vec<f64>,
}

/// A planned transformation: every point resolved, the output and input
/// DOFs of the result, and each new row and column as old indices with
/// their coefficients.
#[derive(Debug, Clone)]
pub struct Plan {
    pub points: Vec<VpMatrices>,
    /// Output row index of each point's sensors in the set.
    sensor_rows: Vec<Vec<usize>>,
    /// Input column index of each point's impacts in the set.
    impact_cols: Vec<Vec<usize>>,
    pub outputs: Vec<Dof>,
    pub inputs: Vec<Dof>,
    /// New output a = Σ coef · old output i.
    out_map: Vec<Vec<(usize, f64)>>,
    /// New input b: Y'[·, b] = Σ coef · Y[·, j].
    in_map: Vec<Vec<(usize, f64)>>,
}

/// The transformed set and what each point's consistency was.
#[derive(Debug, Clone)]
pub struct Transformed {
    pub set: FrfSet,
    pub points: Vec<VirtualPointReport>,
}

/// The context of point `i` for messages.
pub(crate) fn point_context(i: usize, name: &str) -> String {
    format!("points[{i}] ('{}')", quote(name))
}

/// Which DOFs of `dofs` a channel entry names: a node (every DOF at it) or
/// one DOF (whatever its sign); a label without a component matches any,
/// but only one.
fn matching(label: &str, dofs: &[Dof], side: &str, set: &str) -> Result<Vec<usize>> {
    let want = Dof::parse(label, "")?;
    let hits: Vec<usize> = (0..dofs.len())
        .filter(|&i| {
            let d = &dofs[i];
            (want.component.is_empty() || want.component == d.component)
                && want.node == d.node
                && (want.dir == Direction::Scalar || want.dir == d.dir)
        })
        .collect();
    if hits.is_empty() {
        return Err(Error::dof(format!(
            "'{}' names no {side} DOF of '{}'; its {side} DOFs are {}",
            quote(label),
            quote(set),
            crate::frf::labels(dofs)
        )));
    }
    let comps: std::collections::BTreeSet<&str> =
        hits.iter().map(|&i| dofs[i].component.as_str()).collect();
    if comps.len() > 1 {
        return Err(Error::dof(format!(
            "'{}' is ambiguous: it names DOFs of components {}; write it as COMPONENT:{}",
            quote(label),
            comps.into_iter().collect::<Vec<_>>().join(", "),
            quote(label)
        )));
    }
    Ok(hits)
}

/// Resolve one side of a point: each entry's DOFs (refusing a DOF listed
/// twice, here or in another point), located in the geometry.
#[allow(clippy::too_many_arguments)]
fn resolve_side(
    entries: &[String],
    dofs: &[Dof],
    side: &str,
    operand: &str,
    set: &str,
    geom: &Geometry,
    taken: &mut BTreeMap<usize, String>,
    point: &str,
) -> Result<(Vec<usize>, Vec<Located>)> {
    let what = if side == "output" {
        "sensor channel"
    } else {
        "impact"
    };
    let mut idx = Vec::new();
    let mut loc = Vec::new();
    for (k, e) in entries.iter().enumerate() {
        let place = format!("{operand}[{k}]");
        let hits = matching(e, dofs, side, set).map_err(|e| e.field(place.clone()))?;
        for i in hits {
            let here = format!("{point}.{place}");
            if let Some(first) = taken.get(&i) {
                return Err(Error::recipe(format!(
                    "{what} {} is listed twice: by {first} and by {here}",
                    dofs[i]
                ))
                .field(place));
            }
            taken.insert(i, here);
            let l = geom
                .locate(&dofs[i], what)
                .map_err(|e| e.field(place.clone()))?;
            idx.push(i);
            loc.push(l);
        }
    }
    Ok((idx, loc))
}

/// Per-channel weights from `{label: weight}` (a node or a DOF among the
/// point's channels; default 1; each channel weighted once).
fn weights(given: &[(String, f64)], located: &[Located], operand: &str) -> Result<Vec<f64>> {
    let mut w = vec![1.0; located.len()];
    let mut by: Vec<Option<&str>> = vec![None; located.len()];
    for (label, x) in given {
        let place = format!("{operand}.{}", quote(label));
        if !(x.is_finite() && *x > 0.0) {
            return Err(Error::recipe(format!(
                "weight {x} of '{}': expected a positive finite number",
                quote(label)
            ))
            .field(place));
        }
        let dofs: Vec<Dof> = located.iter().map(|l| l.dof.clone()).collect();
        let hits = matching(label, &dofs, "channel", "this virtual point")
            .map_err(|e| e.field(place.clone()))?;
        for i in hits {
            if let Some(first) = by[i] {
                return Err(Error::recipe(format!(
                    "{} is weighted twice, by '{}' and by '{}'",
                    dofs[i],
                    quote(first),
                    quote(label)
                ))
                .field(place));
            }
            by[i] = Some(label);
            w[i] = *x;
        }
    }
    Ok(w)
}

/// The six DOFs of a point named `name` (`NODE` or `COMPONENT:NODE`; the
/// component defaults to its channels' one).
fn point_dofs(name: &str, located: &[&Located]) -> Result<Vec<Dof>> {
    let d = Dof::parse(name, "").map_err(|e| e.field("name"))?;
    if d.dir != Direction::Scalar {
        return Err(Error::recipe(format!(
            "name '{}' carries a direction; a virtual point is named by a node (its DOFs are NAME+X … NAME+RZ)",
            quote(name)
        ))
        .field("name"));
    }
    let comp = if d.component.is_empty() {
        let comps: std::collections::BTreeSet<&str> =
            located.iter().map(|l| l.dof.component.as_str()).collect();
        if comps.len() > 1 {
            return Err(Error::recipe(format!(
                "the channels belong to components {}; name the point COMPONENT:{}",
                comps.into_iter().collect::<Vec<_>>().join(", "),
                quote(name)
            ))
            .field("name"));
        }
        comps.into_iter().next().unwrap_or("").to_string()
    } else {
        d.component.clone()
    };
    Ok(Direction::SPATIAL
        .iter()
        .map(|&dir| Dof::new(&comp, &d.node, dir))
        .collect())
}

fn check_rank(
    r: &[f64],
    w: &[f64],
    located: &[Located],
    origin: [f64; 3],
    geom: &Geometry,
    side: &str,
) -> Result<modes::Inverse> {
    let (what, loads, remedy) = if side == "sensors" {
        (
            "sensor channels",
            "motions",
            "add a sensor off that axis or line",
        )
    } else {
        (
            "impacts",
            "loads (forces and moments)",
            "add impacts that do work on these motions",
        )
    };
    if located.len() < 6 {
        return Err(Error::recipe(format!(
            "{} {what}; a virtual point needs at least 6 (3 translations and 3 rotations), e.g. two tri-axial sensors and one more channel off their line",
            located.len()
        ))
        .field(side.to_string()));
    }
    let scale = modes::length_scale(located, origin);
    match modes::inverse(r, w, scale)? {
        Ok(inv) => Ok(inv),
        Err((rank, unseen)) => {
            let words: Vec<String> = unseen
                .iter()
                .map(|u: &Unseen| modes::describe(u, origin, geom, scale))
                .collect();
            let lead = if side == "sensors" {
                "not determined"
            } else {
                "not determined: the loads on motions no impact does work on"
            };
            Err(Error::numeric(format!(
                "the {} {what} determine {rank} of the 6 {loads} of the virtual point; {lead}: {}; {remedy}",
                located.len(),
                words.join("; ")
            ))
            .field(side.to_string()))
        }
    }
}

/// Resolve the points against `set` and compute their matrices: the plan of
/// the transformation (cheap; the set itself is not touched).
pub fn plan(set: &FrfSet, geom: &Geometry, vps: &[VirtualPointDef]) -> Result<Plan> {
    plan_with(set, geom, vps, !geom.whole_structure)
}

fn plan_with(
    set: &FrfSet,
    geom: &Geometry,
    vps: &[VirtualPointDef],
    every_row: bool,
) -> Result<Plan> {
    if vps.is_empty() {
        return Err(
            Error::recipe("'points' is empty; give at least one virtual point").field("points"),
        );
    }
    if !set.out_qty.is_motion() || set.in_qty != Quantity::Force {
        return Err(Error::quantity(format!(
            "'{}' is {} per {}; virtual points transform motion per force FRFs (receptance, mobility or accelerance)",
            quote(&set.name),
            set.out_qty,
            set.in_qty
        ))
        .field("from"));
    }
    if let Some(k) = set.signal {
        return Err(Error::quantity(format!(
            "'{}' is {}; virtual points transform FRFs",
            quote(&set.name),
            k.describe()
        ))
        .field("from"));
    }
    let mut taken_out = BTreeMap::new();
    let mut taken_in = BTreeMap::new();
    let mut points = Vec::new();
    let mut sensor_rows = Vec::new();
    let mut impact_cols = Vec::new();
    let mut used_rows = vec![false; geom.rows.len()];
    for (p, vp) in vps.iter().enumerate() {
        let ctx = point_context(p, &vp.name);
        let mut one =
            || -> Result<(VpMatrices, Vec<usize>, Vec<usize>)> {
                if vp.origin.iter().any(|x| !x.is_finite()) {
                    return Err(
                        Error::recipe("the origin has a coordinate that is not finite")
                            .field("origin"),
                    );
                }
                let origin = vp.origin.map(|x| x * geom.to_metres);
                if vp.sensors.is_empty() || vp.impacts.is_empty() {
                    return Err(Error::recipe(
                    "a virtual point needs both 'sensors' (output DOFs) and 'impacts' (input DOFs)",
                )
                .field(if vp.sensors.is_empty() { "sensors" } else { "impacts" }));
                }
                let here = format!("points[{p}]");
                let (si, sl) = resolve_side(
                    &vp.sensors,
                    &set.outputs,
                    "output",
                    "sensors",
                    &set.name,
                    geom,
                    &mut taken_out,
                    &here,
                )?;
                let (ii, il) = resolve_side(
                    &vp.impacts,
                    &set.inputs,
                    "input",
                    "impacts",
                    &set.name,
                    geom,
                    &mut taken_in,
                    &here,
                )?;
                let w_u = weights(&vp.sensor_weights, &sl, "sensor_weights")?;
                let w_f = weights(&vp.impact_weights, &il, "impact_weights")?;
                let all: Vec<&Located> = sl.iter().chain(&il).collect();
                let dofs = point_dofs(&vp.name, &all)?;
                let r_u = modes::modes(&sl, origin);
                let r_f = modes::modes(&il, origin);
                let iu = check_rank(&r_u, &w_u, &sl, origin, geom, "sensors")?;
                let i_f = check_rank(&r_f, &w_f, &il, origin, geom, "impacts")?;
                Ok((
                    VpMatrices {
                        dofs,
                        origin,
                        sensors: sl,
                        impacts: il,
                        w_u,
                        w_f,
                        r_u,
                        t_u: iu.t,
                        r_f,
                        t_f: i_f.t,
                        sensor_singular_values: iu.singular_values,
                        impact_singular_values: i_f.singular_values,
                    },
                    si,
                    ii,
                ))
            };
        let (m, si, ii) = one().map_err(|e| e.within(ctx))?;
        for l in m.sensors.iter().chain(&m.impacts) {
            used_rows[l.row] = true;
        }
        points.push(m);
        sensor_rows.push(si);
        impact_cols.push(ii);
    }
    // every geometry row is used or refused
    if let Some(r) = used_rows.iter().position(|u| !u).filter(|_| every_row) {
        let row = &geom.rows[r];
        let mut e = Error::recipe(format!(
            "{} ('{}') locates no sensor channel or impact of any virtual point in this step; remove it or list its DOFs in a point",
            row.place,
            quote(&row.label)
        ))
        .field("geometry");
        if let Some(f) = &geom.file {
            e = e.in_file(f.clone());
            if let Some(n) = row.place.strip_prefix("line ").and_then(|n| n.parse().ok()) {
                e = e.at_line(n);
            }
        }
        return Err(e);
    }
    // the result's DOFs: kept ones in their order, then each point's six
    let mut out_map: Vec<Vec<(usize, f64)>> = Vec::new();
    let mut outputs = Vec::new();
    for (i, d) in set.outputs.iter().enumerate() {
        if !taken_out.contains_key(&i) {
            outputs.push(d.clone());
            out_map.push(vec![(i, 1.0)]);
        }
    }
    let mut in_map: Vec<Vec<(usize, f64)>> = Vec::new();
    let mut inputs = Vec::new();
    for (j, d) in set.inputs.iter().enumerate() {
        if !taken_in.contains_key(&j) {
            inputs.push(d.clone());
            in_map.push(vec![(j, 1.0)]);
        }
    }
    for (p, m) in points.iter().enumerate() {
        let (mu, mf) = (m.sensors.len(), m.impacts.len());
        for (a, d) in m.dofs.iter().enumerate() {
            for (list, name) in [(&outputs, "output"), (&inputs, "input")] {
                if list.iter().any(|o| o.same_place(d)) {
                    return Err(Error::dof(format!(
                        "its DOF {d} is already an {name} DOF of '{}' or of an earlier point; choose another name",
                        quote(&set.name)
                    ))
                    .field("name")
                    .within(point_context(p, &vps[p].name)));
                }
            }
            outputs.push(d.clone());
            out_map.push(
                (0..mu)
                    .map(|i| (sensor_rows[p][i], m.t_u[a * mu + i]))
                    .collect(),
            );
            inputs.push(d.clone());
            in_map.push(
                (0..mf)
                    .map(|j| (impact_cols[p][j], m.t_f[a * mf + j]))
                    .collect(),
            );
        }
    }
    Ok(Plan {
        points,
        sensor_rows,
        impact_cols,
        outputs,
        inputs,
        out_map,
        in_map,
    })
}

/// The matrices of one virtual point of `set` (the library face of the
/// formulas, for checks against other implementations). Rows of the
/// geometry that locate other DOFs are allowed here.
pub fn matrices(set: &FrfSet, geom: &Geometry, vp: &VirtualPointDef) -> Result<VpMatrices> {
    let mut p = plan_with(set, geom, std::slice::from_ref(vp), false)?;
    Ok(p.points.remove(0))
}

impl Plan {
    pub fn n_out(&self) -> usize {
        self.outputs.len()
    }
    pub fn n_in(&self) -> usize {
        self.inputs.len()
    }

    /// Estimated floating-point operations of applying the plan to `lines`
    /// lines of a set with `n_out` × `n_in` (the two products and the
    /// consistencies).
    pub fn work(&self, lines: usize, n_out: usize, n_in: usize) -> f64 {
        let nnz = |m: &[Vec<(usize, f64)>]| m.iter().map(|r| r.len()).sum::<usize>() as f64;
        let prod = nnz(&self.out_map) * n_in as f64 + self.n_out() as f64 * nnz(&self.in_map);
        let cons: f64 = self
            .points
            .iter()
            .map(|p| {
                let (m, f) = (p.sensors.len() as f64, p.impacts.len() as f64);
                m * m * n_in as f64 + f * f * n_out as f64
            })
            .sum();
        8.0 * lines as f64 * (prod + cons)
    }

    /// Apply the plan to `set`: Y' = T_U Y T_Fᵀ line by line, presence
    /// carried (an entry is present when every value it combines is), and
    /// each point's consistency against `threshold`.
    pub fn apply(&self, set: &FrfSet, threshold: f64) -> Result<Transformed> {
        let (no, ni) = (self.n_out(), self.n_in());
        let mut out = FrfSet::zeros(
            &set.name,
            set.freqs.clone(),
            self.outputs.clone(),
            self.inputs.clone(),
            set.out_qty,
            set.in_qty,
        );
        out.provenance = set.provenance.clone();
        out.warnings = set.warnings.clone();
        if set.coherence.is_some() {
            out.warnings.push(format!(
                "the coherence of '{}' is not carried to the transformed set (it is not defined for a combination of channels)",
                set.name
            ));
        }
        for a in 0..no {
            for b in 0..ni {
                out.present[a * ni + b] = self.out_map[a]
                    .iter()
                    .all(|&(i, _)| self.in_map[b].iter().all(|&(j, _)| set.is_present(i, j)));
            }
        }
        let n_in0 = set.n_in();
        let mut z = vec![Complex64::new(0.0, 0.0); no * n_in0];
        for k in 0..set.n_lines() {
            let y = set.line(k);
            // Z = T_U Y
            for (a, row) in self.out_map.iter().enumerate() {
                let zr = &mut z[a * n_in0..(a + 1) * n_in0];
                zr.fill(Complex64::new(0.0, 0.0));
                for &(i, c) in row {
                    for (zv, yv) in zr.iter_mut().zip(&y[i * n_in0..(i + 1) * n_in0]) {
                        *zv += *yv * c;
                    }
                }
            }
            // Y' = Z T_Fᵀ
            let dst = out.line_mut(k);
            for a in 0..no {
                for (b, col) in self.in_map.iter().enumerate() {
                    let mut s = Complex64::new(0.0, 0.0);
                    for &(j, c) in col {
                        s += z[a * n_in0 + j] * c;
                    }
                    dst[a * ni + b] = s;
                }
            }
        }
        for a in 0..no {
            for b in 0..ni {
                if !out.present[a * ni + b] {
                    for k in 0..out.n_lines() {
                        out.set(k, a, b, Complex64::new(f64::NAN, f64::NAN));
                    }
                }
            }
        }
        let mut reports = Vec::new();
        for (p, m) in self.points.iter().enumerate() {
            let r = consistency(
                set,
                m,
                &self.sensor_rows[p],
                &self.impact_cols[p],
                threshold,
            );
            out.warnings.extend(r.warnings());
            reports.push(r);
        }
        out.validate()?;
        Ok(Transformed {
            set: out,
            points: reports,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::vpt::geometry::RawRow;

    /// A set of 9 channels (three tri-axial sensors) × 9 impacts made from
    /// a known 6 × 6 matrix at the origin by rigid-body kinematics.
    fn rigid_case() -> (FrfSet, Geometry, VirtualPointDef, Vec<Complex64>) {
        let pos = [[0.05, 0.0, 0.0], [0.0, 0.04, 0.01], [-0.03, -0.02, 0.02]];
        let mut rows = Vec::new();
        let mut outs = Vec::new();
        for (s, p) in pos.iter().enumerate() {
            rows.push(RawRow {
                label: format!("b:s{s}"),
                at: p.map(|x| x * 1000.0),
                dir: None,
            });
            for d in [Direction::X, Direction::Y, Direction::Z] {
                outs.push(Dof::new("b", &format!("s{s}"), d));
            }
        }
        let hits = [
            ([0.06, 0.01, 0.0], [1.0, 0.0, 0.0]),
            ([0.0, 0.05, 0.0], [0.0, 1.0, 0.0]),
            ([0.01, 0.0, 0.03], [0.0, 0.0, 1.0]),
            ([-0.04, 0.01, 0.0], [0.0, 1.0, 1.0]),
            ([0.02, -0.03, 0.01], [1.0, 1.0, 0.0]),
            ([0.0, 0.0, -0.02], [0.0, 0.0, -1.0]),
            ([0.03, 0.03, 0.03], [1.0, 0.0, 1.0]),
            ([-0.02, 0.04, 0.0], [1.0, 0.0, 0.0]),
            ([0.0, -0.05, 0.02], [0.0, 0.0, 1.0]),
        ];
        let mut ins = Vec::new();
        for (h, (p, d)) in hits.iter().enumerate() {
            rows.push(RawRow {
                label: format!("b:h{h}+X"),
                at: p.map(|x| x * 1000.0),
                dir: Some(*d),
            });
            ins.push(Dof::new("b", &format!("h{h}"), Direction::X));
        }
        let places: Vec<String> = (0..rows.len()).map(|i| format!("rows[{i}]")).collect();
        let g = Geometry::from_rows("mm", &rows, &places).unwrap();
        let vp = VirtualPointDef {
            name: "bolt".into(),
            origin: [1.0, 2.0, -1.0],
            sensors: vec!["s0".into(), "s1".into(), "b:s2".into()],
            impacts: (0..9).map(|h| format!("h{h}+X")).collect(),
            sensor_weights: Vec::new(),
            impact_weights: Vec::new(),
        };
        // Y_uf = R_u H R_fᵀ for a known complex 6 × 6 H
        let mut set = FrfSet::zeros(
            "b",
            vec![10.0, 20.0],
            outs,
            ins,
            Quantity::Acceleration,
            Quantity::Force,
        );
        let h: Vec<Complex64> = (0..36)
            .map(|n| Complex64::new(((n * 7) % 11) as f64 - 5.0, ((n * 5) % 13) as f64 * 0.3))
            .collect();
        let dummy = plan_matrices_only(&set, &g, &vp);
        for k in 0..2 {
            for i in 0..9 {
                for j in 0..9 {
                    let mut v = Complex64::new(0.0, 0.0);
                    for a in 0..6 {
                        for b in 0..6 {
                            v += dummy.r_u[i * 6 + a] * h[a * 6 + b] * dummy.r_f[j * 6 + b];
                        }
                    }
                    set.set(k, i, j, v * (k + 1) as f64);
                }
            }
        }
        (set, g, vp, h)
    }

    fn plan_matrices_only(set: &FrfSet, g: &Geometry, vp: &VirtualPointDef) -> VpMatrices {
        matrices(set, g, vp).unwrap()
    }

    #[test]
    fn rigid_data_give_back_the_point_matrix() {
        let (set, g, vp, h) = rigid_case();
        let p = plan(&set, &g, std::slice::from_ref(&vp)).unwrap();
        let t = p.apply(&set, 0.9).unwrap();
        let labels: Vec<String> = t.set.outputs.iter().map(|d| d.to_string()).collect();
        assert_eq!(labels[0], "b:bolt+X");
        assert_eq!(labels[5], "b:bolt+RZ");
        for k in 0..2 {
            for a in 0..6 {
                for b in 0..6 {
                    let want = h[a * 6 + b] * (k + 1) as f64;
                    assert!((t.set.get(k, a, b) - want).norm() < 1e-11, "{a} {b}");
                }
            }
        }
        let r = &t.points[0];
        assert!((r.worst_sensor_consistency.unwrap() - 1.0).abs() < 1e-12);
        assert!((r.worst_impact_consistency.unwrap() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn listed_twice_and_unknown_channels_are_refused() {
        let (set, g, mut vp, _) = rigid_case();
        vp.sensors.push("b:s0+Y".into());
        let e = plan(&set, &g, std::slice::from_ref(&vp)).unwrap_err();
        assert!(e.message.contains("b:s0+Y is listed twice"), "{e}");
        assert_eq!(e.context_path(), "points[0] ('bolt')");
        vp.sensors.pop();
        vp.sensors.push("s7".into());
        let e = plan(&set, &g, std::slice::from_ref(&vp)).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("sensors[3]"), "{e}");
        // impacts all along Z: no force along X or Y, no moment about Z
        let (set2, g2, mut vp2, _) = rigid_case();
        let mut rows: Vec<RawRow> = Vec::new();
        for r in &g2.rows {
            rows.push(RawRow {
                label: r.label.clone(),
                at: r.at.map(|x| x * 1000.0),
                dir: r.dir.map(|_| [0.0, 0.0, 1.0]),
            });
        }
        let places: Vec<String> = (0..rows.len()).map(|i| format!("rows[{i}]")).collect();
        let g3 = Geometry::from_rows("mm", &rows, &places).unwrap();
        vp2.origin = [0.0, 0.0, 0.0];
        let e = plan(&set2, &g3, std::slice::from_ref(&vp2)).unwrap_err();
        eprintln!("{e}");
        assert!(
            e.message
                .contains("the 9 impacts determine 3 of the 6 loads"),
            "{e}"
        );
        assert!(e.message.contains("no impact does work on"), "{e}");
        assert_eq!(e.field.as_deref(), Some("impacts"), "{e}");
        vp.sensors.truncate(1);
        let e = plan(&set, &g, std::slice::from_ref(&vp)).unwrap_err();
        assert!(
            e.message
                .contains("3 sensor channels; a virtual point needs at least 6"),
            "{e}"
        );
    }
}
