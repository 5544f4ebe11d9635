//! Dataset 55 (data at nodes) as a modal model: real normal modes (analysis
//! type 2) and complex modes of the first-order (displacement) form
//! (analysis type 3), into [`crate::synth::modal::ModalModel`], which
//! synthesizes FRFs by modal superposition.
//!
//! Layout (the public dataset 55 description, as reproduced in pyuff 2.5.8
//! `datasets/dataset_55.py`): records 1-5 ID lines; record 6 `6I10` model
//! type, analysis type, data characteristic (2: 3 DOF translation, 3: 6 DOF
//! translation and rotation), specific data type (8 displacement), data type
//! (2 real, 5 complex), values per node (3 or 6); record 7 `8I10` numbers of
//! integer and real values, load case, mode number; record 8 `6E13.5` the
//! real values; then per node a line with the node number and its values
//! (`6E13.5`, complex as re, im pairs).
//!
//! Meaning (common practice, the I-DEAS convention):
//! * analysis type 2, record 8: frequency (Hz), modal mass, viscous damping
//!   ratio ζ, hysteretic damping; each mode adds
//!   φ_i φ_j / (m (ω_r²(1 + iη) − ω² + 2iζω_rω)) with the hysteretic value
//!   read as the loss factor η (said in a warning when it is not 0);
//! * analysis type 3, record 8: eigenvalue λ (rad/s, re and im), modal A and
//!   modal B (re and im); each mode adds ψ_i ψ_j / (a (iω − λ)) and its
//!   complex conjugate. mortise stores ψ/√a with the pole λ (a pole given
//!   with a negative imaginary part is taken as its conjugate, with ψ and
//!   a conjugated). Modal B follows from a and λ (B = −aλ) and is not used;
//!   a B that is not 0 and disagrees with −aλ by more than 1e-4 is said in a
//!   warning.
//!
//! Every mode must give the same nodes in the same order and the same
//! values per node; all modes must share one load case. The shapes are
//! displacements in file length units: after a dataset 164 the residues are
//! scaled to m/N (see `units164.rs`). DOFs: node number with directions X,
//! Y, Z (RX, RY, RZ for 6 values a node), positive, in the file's component.

use super::block::Block;
use super::units164::UnitSystem;
use crate::error::{Error, Result};
use crate::frf::{Direction, Dof};
use crate::synth::modal::{ComplexMode, ModalModel, Mode};
use num_complex::Complex64;

/// One mode as read from a dataset 55.
#[derive(Debug, Clone)]
pub(super) struct Mode55 {
    line: usize,
    analysis: i64,
    load_case: i64,
    mode_n: i64,
    ndv: usize,
    /// Record 8 values.
    params: Vec<f64>,
    nodes: Vec<i64>,
    /// ndv values a node.
    values: Vec<Complex64>,
    /// Residue factor to m/N (1 without a dataset 164).
    recept: f64,
}

/// Summary of one mode, for `inspect` and the page.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ModeSummary {
    pub mode: i64,
    /// "real" or "complex".
    pub kind: String,
    pub freq_hz: f64,
    pub zeta: f64,
    pub line: usize,
}

/// Read one dataset 55; `Ok(None)` with a remark for analysis types that
/// are not modes.
pub(super) fn parse_55(
    b: &Block,
    u: Option<&UnitSystem>,
    remarks: &mut Vec<String>,
) -> Result<Option<Mode55>> {
    for i in 0..5 {
        b.line(i, &format!("record {} (ID line {})", i + 1, i + 1))?;
    }
    let f6 = "record 6 (model type, analysis type, data characteristic, specific data type, data type, values per node)";
    let r6 = b.ints(5, 6, 10, f6)?;
    let (analysis, data_ch, spec, dtype, ndv) = (r6[1], r6[2], r6[3], r6[4], r6[5]);
    if !matches!(analysis, 2 | 3) {
        remarks.push(format!(
            "{}: line {}: dataset 55 of analysis type {analysis} skipped: mortise reads modes (2 normal mode, 3 complex eigenvalue first order)",
            b.file, b.start
        ));
        return Ok(None);
    }
    let want_ndv = match data_ch {
        2 => 3,
        3 => 6,
        c => {
            return Err(b.err(
                5,
                "record 6, data characteristic",
                format!("data characteristic {c}; expected 2 (3 DOF translation) or 3 (6 DOF translation and rotation)"),
            ))
        }
    };
    if ndv != want_ndv {
        return Err(b.err(
            5,
            "record 6, values per node",
            format!(
                "{ndv} values per node with data characteristic {data_ch}; expected {want_ndv}"
            ),
        ));
    }
    if spec != 8 {
        return Err(b.err(
            5,
            "record 6, specific data type",
            format!("specific data type {spec} for mode shapes; expected 8 (displacement)"),
        ));
    }
    let complex = match dtype {
        2 => false,
        5 => true,
        d => {
            return Err(b.err(
                5,
                "record 6, data type",
                format!("data type {d}; expected 2 (real) or 5 (complex)"),
            ))
        }
    };
    if analysis == 3 && !complex {
        return Err(b.err(
            5,
            "record 6, data type",
            "a complex mode (analysis type 3) with real shape data (data type 2); expected 5 (complex)",
        ));
    }
    let r7 = b.ints(
        6,
        4,
        10,
        "record 7 (integer and real counts, load case, mode number)",
    )?;
    let n_real = if analysis == 2 { 4 } else { 6 };
    if r7[1] != n_real as i64 {
        return Err(b.err(
            6,
            "record 7, number of real values",
            format!(
                "{} real values announced for analysis type {analysis}; expected {n_real}",
                r7[1]
            ),
        ));
    }
    let params = b.reals(7, n_real, 13, "record 8 (modal parameters)")?;
    let ndv = ndv as usize;
    let per_node = if complex { 2 * ndv } else { ndv };
    let lines_per_node = per_node.div_ceil(6);
    let rest = b.len() - 8;
    if rest % (1 + lines_per_node) != 0 {
        return Err(b.err(
            b.len(),
            "records 9-10 (node number and its values)",
            format!(
                "{rest} node lines; expected {} a node (the node number, then {per_node} values in lines of 6), so the last node is cut short",
                1 + lines_per_node
            ),
        ));
    }
    let n_nodes = rest / (1 + lines_per_node);
    if n_nodes == 0 {
        return Err(b.err(
            8,
            "record 9 (node number)",
            "a mode without nodes; expected at least one node",
        ));
    }
    let mut nodes = Vec::with_capacity(n_nodes);
    let mut values = Vec::with_capacity(n_nodes * ndv);
    for n in 0..n_nodes {
        let k = 8 + n * (1 + lines_per_node);
        let id = b.ints(k, 1, 10, "record 9 (node number)")?[0];
        let mut v = Vec::with_capacity(per_node);
        for l in 0..lines_per_node {
            let cnt = (per_node - 6 * l).min(6);
            v.extend(b.reals(k + 1 + l, cnt, 13, "record 10 (values at the node)")?);
        }
        if complex {
            values.extend(v.chunks(2).map(|c| Complex64::new(c[0], c[1])));
        } else {
            values.extend(v.iter().map(|&x| Complex64::new(x, 0.0)));
        }
        nodes.push(id);
    }
    Ok(Some(Mode55 {
        line: b.start,
        analysis,
        load_case: r7[2],
        mode_n: r7[3],
        ndv,
        params,
        nodes,
        values,
        recept: u.map(|s| s.receptance_to_si()).unwrap_or(1.0),
    }))
}

fn err(file: &str, line: usize, field: &str, msg: String) -> Error {
    super::text::perr(file, line, field, msg)
}

/// The modes of a file as one modal model (DOFs in `component`).
pub(super) fn build_model(
    file: &str,
    name: &str,
    component: &str,
    modes: &[Mode55],
    warnings: &mut Vec<String>,
) -> Result<(ModalModel, Vec<ModeSummary>)> {
    let first = &modes[0];
    let dirs: &[Direction] = if first.ndv == 6 {
        &Direction::SPATIAL
    } else {
        &Direction::SPATIAL[..3]
    };
    let mut dofs = Vec::new();
    for n in &first.nodes {
        for d in dirs {
            dofs.push(Dof::new(component, &n.to_string(), *d));
        }
    }
    let mut model = ModalModel {
        name: name.to_string(),
        dofs,
        modes: Vec::new(),
        residuals: Vec::new(),
        complex_modes: Vec::new(),
    };
    let mut list = Vec::new();
    for m in modes {
        if m.nodes.len() != first.nodes.len() || m.ndv != first.ndv {
            return Err(err(
                file,
                m.line,
                "records 9-10 (nodes)",
                format!(
                    "mode {} gives {} node(s) with {} values each but the first mode (dataset 55 at line {}) gives {} with {}; every mode must give the same nodes",
                    m.mode_n,
                    m.nodes.len(),
                    m.ndv,
                    first.line,
                    first.nodes.len(),
                    first.ndv
                ),
            ));
        }
        if let Some(k) = (0..m.nodes.len()).find(|&k| m.nodes[k] != first.nodes[k]) {
            return Err(err(
                file,
                m.line,
                "record 9 (node number)",
                format!(
                    "mode {} gives node {} in place {} where the first mode (dataset 55 at line {}) gives node {}; every mode must give the same nodes in the same order",
                    m.mode_n,
                    m.nodes[k],
                    k + 1,
                    first.line,
                    first.nodes[k]
                ),
            ));
        }
        if m.load_case != first.load_case {
            return Err(err(
                file,
                m.line,
                "record 7, load case",
                format!(
                    "mode {} is of load case {} but the first mode (line {}) of load case {}; mortise reads one modal model a file",
                    m.mode_n, m.load_case, first.line, first.load_case
                ),
            ));
        }
        let s = m.recept.sqrt();
        if m.analysis == 2 {
            let (f, mass, zeta, eta) = (m.params[0], m.params[1], m.params[2], m.params[3]);
            if m.values.iter().any(|v| v.im != 0.0) {
                return Err(err(
                    file,
                    m.line,
                    "record 10 (values at the node)",
                    format!("normal mode {} has complex shape values; expected real ones (or analysis type 3)", m.mode_n),
                ));
            }
            if mass.is_nan() || mass <= 0.0 {
                return Err(err(
                    file,
                    m.line + 9,
                    "record 8, modal mass",
                    format!(
                        "mode {} has modal mass {mass}; expected a value above 0",
                        m.mode_n
                    ),
                ));
            }
            if eta != 0.0 {
                warnings.push(format!(
                    "{file}: line {}: mode {}: hysteretic damping {eta} read as the loss factor η (stiffness ω_r²(1 + iη))",
                    m.line, m.mode_n
                ));
            }
            model.modes.push(Mode {
                freq: f,
                zeta,
                eta,
                modal_mass: mass,
                shape: m.values.iter().map(|v| v.re * s).collect(),
            });
            list.push(ModeSummary {
                mode: m.mode_n,
                kind: "real".into(),
                freq_hz: f,
                zeta,
                line: m.line,
            });
        } else {
            let mut lam = Complex64::new(m.params[0], m.params[1]);
            let mut a = Complex64::new(m.params[2], m.params[3]);
            let bb = Complex64::new(m.params[4], m.params[5]);
            if a.norm() == 0.0 {
                return Err(err(
                    file,
                    m.line + 9,
                    "record 8, modal A",
                    format!("complex mode {} has modal A = 0; expected the scaling of its residues ψψ/A", m.mode_n),
                ));
            }
            if bb.norm() != 0.0 && (bb + a * lam).norm() > 1e-4 * (a * lam).norm() {
                warnings.push(format!(
                    "{file}: line {}: complex mode {}: modal B {} differs from −A·λ = {}; B is not used",
                    m.line,
                    m.mode_n,
                    bb,
                    -(a * lam)
                ));
            }
            let mut psi: Vec<Complex64> = m.values.clone();
            if lam.im < 0.0 {
                lam = lam.conj();
                a = a.conj();
                psi.iter_mut().for_each(|v| *v = v.conj());
            }
            let w = lam.norm();
            let zeta = -lam.re / w;
            if !(w > 0.0 && zeta > 0.0 && zeta < 1.0) {
                return Err(err(
                    file,
                    m.line + 9,
                    "record 8, eigenvalue",
                    format!(
                        "complex mode {} has eigenvalue {lam} rad/s; expected a damped pole (negative real part, |re| < |λ|)",
                        m.mode_n
                    ),
                ));
            }
            let sa = a.sqrt();
            let f = w / (2.0 * std::f64::consts::PI);
            model.complex_modes.push(ComplexMode {
                freq: f,
                zeta,
                shape: psi.iter().map(|v| v * s / sa).collect(),
            });
            list.push(ModeSummary {
                mode: m.mode_n,
                kind: "complex".into(),
                freq_hz: f,
                zeta,
                line: m.line,
            });
        }
    }
    model
        .validate()
        .map_err(|e| e.field("dataset 55").in_file(file))?;
    Ok((model, list))
}
