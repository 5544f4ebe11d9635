//! How rigidly the measured interface moves: the sensor and impact
//! consistency of each virtual point, per frequency line.
//!
//! * **Sensor consistency** ρ_u = ‖P_u Y_u‖_F / ‖Y_u‖_F, with Y_u the rows
//!   of the point's sensor channels over every input column of the set
//!   (columns where one of those entries is missing are left out) and
//!   P_u = R_u T_u the projection onto the rigid interface motions: the part
//!   of the measured motion the six virtual-point motions explain.
//! * **Impact consistency** ρ_f = ‖Y_f P_fᵀ‖_F / ‖Y_f‖_F, with Y_f the
//!   columns of the point's impacts over every output row (rows with a
//!   missing entry left out) and P_f = R_f T_f: the part of the responses to
//!   the impacts that the six virtual-point loads explain.
//!
//! Both are 1 when the interface moves rigidly and the impacts act on a
//! rigid interface (to rounding); with unit weights they are at most 1, and
//! with other weights P is an oblique projection and a value above 1 is
//! possible. A line where ‖Y‖ is 0 (or not finite) has no value. A point is
//! flagged when either falls below the step's threshold (default 0.9,
//! common practice) at any line.

use super::transform::VpMatrices;
use crate::audit::Status;
use crate::frf::FrfSet;
use num_complex::Complex64;
use serde::{Deserialize, Serialize};

/// One virtual point in a step's report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct VirtualPointReport {
    /// The point's node label, `component:node`.
    pub name: String,
    /// Its six DOFs.
    pub dofs: Vec<String>,
    /// Origin, metres.
    pub origin_m: [f64; 3],
    /// The sensor channels and impacts used, in the order of R's rows.
    pub sensors: Vec<String>,
    pub impacts: Vec<String>,
    /// Singular values of √W R S on each side (see `vpt::modes`): how well
    /// the geometry determines the six motions and loads.
    pub sensor_singular_values: Vec<f64>,
    pub impact_singular_values: Vec<f64>,
    /// The threshold below which a consistency is flagged.
    pub threshold: f64,
    /// ρ_u and ρ_f per line of the set (null where not defined).
    pub sensor_consistency: Vec<Option<f64>>,
    pub impact_consistency: Vec<Option<f64>>,
    pub worst_sensor_consistency: Option<f64>,
    pub worst_sensor_consistency_hz: Option<f64>,
    pub worst_impact_consistency: Option<f64>,
    pub worst_impact_consistency_hz: Option<f64>,
    /// Flag when either consistency falls below the threshold.
    pub status: Status,
}

impl VirtualPointReport {
    /// The step warnings this point raises.
    pub fn warnings(&self) -> Vec<String> {
        let mut w = Vec::new();
        for (side, worst, at, meaning) in [
            (
                "sensor",
                self.worst_sensor_consistency,
                self.worst_sensor_consistency_hz,
                "the sensors do not move as one rigid body there (a flexible interface, a misplaced or misoriented sensor, noise)",
            ),
            (
                "impact",
                self.worst_impact_consistency,
                self.worst_impact_consistency_hz,
                "the impacts do not act on one rigid body there (a flexible interface, a misplaced or misoriented impact, noise)",
            ),
        ] {
            if let Some(v) = worst.filter(|&v| v < self.threshold) {
                w.push(format!(
                    "virtual point '{}': {side} consistency falls to {v:.4} at {} Hz, below {} (common practice: 0.9): {meaning}",
                    self.name,
                    at.map_or("?".to_string(), |f| format!("{f}")),
                    self.threshold
                ));
            }
        }
        if self.sensor_consistency.iter().all(Option::is_none) {
            w.push(format!(
                "virtual point '{}': no sensor consistency could be computed (no complete column, or zero data)",
                self.name
            ));
        }
        if self.impact_consistency.iter().all(Option::is_none) {
            w.push(format!(
                "virtual point '{}': no impact consistency could be computed (no complete row, or zero data)",
                self.name
            ));
        }
        w
    }
}

/// P = R T (n × n, row-major) of one side.
fn projector(r: &[f64], t: &[f64], n: usize) -> Vec<f64> {
    let mut p = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..n {
            p[i * n + j] = (0..6).map(|a| r[i * 6 + a] * t[a * n + j]).sum();
        }
    }
    p
}

fn ratio(num: f64, den: f64) -> Option<f64> {
    let r = (num / den).sqrt();
    (den > 0.0 && r.is_finite()).then_some(r)
}

/// ρ_u per line over the rows `rows` of `set` (see the module docs).
pub fn sensor_consistency(set: &FrfSet, m: &VpMatrices, rows: &[usize]) -> Vec<Option<f64>> {
    let n = rows.len();
    let p = projector(&m.r_u, &m.t_u, n);
    let cols: Vec<usize> = (0..set.n_in())
        .filter(|&j| rows.iter().all(|&i| set.is_present(i, j)))
        .collect();
    (0..set.n_lines())
        .map(|k| {
            let (mut num, mut den) = (0.0, 0.0);
            for &j in &cols {
                for a in 0..n {
                    let mut s = Complex64::new(0.0, 0.0);
                    for (b, &i) in rows.iter().enumerate() {
                        s += set.get(k, i, j) * p[a * n + b];
                    }
                    num += s.norm_sqr();
                    den += set.get(k, rows[a], j).norm_sqr();
                }
            }
            ratio(num, den)
        })
        .collect()
}

/// ρ_f per line over the columns `cols` of `set` (see the module docs).
pub fn impact_consistency(set: &FrfSet, m: &VpMatrices, cols: &[usize]) -> Vec<Option<f64>> {
    let n = cols.len();
    let p = projector(&m.r_f, &m.t_f, n);
    let rows: Vec<usize> = (0..set.n_out())
        .filter(|&i| cols.iter().all(|&j| set.is_present(i, j)))
        .collect();
    (0..set.n_lines())
        .map(|k| {
            let (mut num, mut den) = (0.0, 0.0);
            for &i in &rows {
                for a in 0..n {
                    let mut s = Complex64::new(0.0, 0.0);
                    for (b, &j) in cols.iter().enumerate() {
                        s += set.get(k, i, j) * p[a * n + b];
                    }
                    num += s.norm_sqr();
                    den += set.get(k, i, cols[a]).norm_sqr();
                }
            }
            ratio(num, den)
        })
        .collect()
}

fn lowest(freqs: &[f64], v: &[Option<f64>]) -> (Option<f64>, Option<f64>) {
    let mut best: Option<(f64, f64)> = None;
    for (k, x) in v.iter().enumerate() {
        if let Some(x) = *x {
            if best.map_or(true, |(b, _)| x < b) {
                best = Some((x, freqs[k]));
            }
        }
    }
    (best.map(|b| b.0), best.map(|b| b.1))
}

/// The report of one point: both consistencies per line, their worst
/// values, and the flag against `threshold`.
pub fn consistency(
    set: &FrfSet,
    m: &VpMatrices,
    rows: &[usize],
    cols: &[usize],
    threshold: f64,
) -> VirtualPointReport {
    let su = sensor_consistency(set, m, rows);
    let sf = impact_consistency(set, m, cols);
    let (wu, wu_at) = lowest(&set.freqs, &su);
    let (wf, wf_at) = lowest(&set.freqs, &sf);
    let flagged = wu.is_some_and(|v| v < threshold) || wf.is_some_and(|v| v < threshold);
    let d0 = &m.dofs[0];
    VirtualPointReport {
        name: format!("{}:{}", d0.component, d0.node),
        dofs: m.dofs.iter().map(|d| d.to_string()).collect(),
        origin_m: m.origin,
        sensors: m.sensors.iter().map(|l| l.dof.to_string()).collect(),
        impacts: m.impacts.iter().map(|l| l.dof.to_string()).collect(),
        sensor_singular_values: m.sensor_singular_values.clone(),
        impact_singular_values: m.impact_singular_values.clone(),
        threshold,
        sensor_consistency: su,
        impact_consistency: sf,
        worst_sensor_consistency: wu,
        worst_sensor_consistency_hz: wu_at,
        worst_impact_consistency: wf,
        worst_impact_consistency_hz: wf_at,
        status: if flagged { Status::Flag } else { Status::Pass },
    }
}
