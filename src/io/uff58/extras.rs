//! What a UFF file holds besides its FRFs and spectra: header (151), unit
//! systems (164), geometry (15, 2411, 18, 2420, 82) and a modal model (55),
//! as [`UffExtras`] ([`read_extras`]); and the writers of geometry as 2411
//! ([`write_2411`]) and of a modal model as 55 ([`write_55`]).
//!
//! ## Exactness of what is written
//! Dataset 2411 holds coordinates in 25-column fields (`1P3D25.16`): each is
//! written with its shortest round-trip text, so coordinates come back
//! bit-exact. Dataset 55 holds its values in 13-column fields (`6E13.5`),
//! which column readers such as pyuff cut by position: each value is
//! written with its shortest round-trip text when it fits, else with 7
//! significant digits (relative error ≤ 5e-7). Complex modes are written
//! with modal A = 1 and modal B = −λ, so the shape values are ψ as mortise
//! stores it.

use super::geometry::{Geometry, GeometrySummary};
use super::header151::Header151;
use super::modal55::{build_model, ModeSummary};
use super::scan::{parse_file, Parsed};
use super::units164::UnitSystem;
use crate::error::{Error, Result};
use crate::frf::Direction;
use crate::synth::modal::ModalModel;

/// The datasets besides 58 that a UFF file held.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct UffExtras {
    pub headers: Vec<Header151>,
    pub units: Vec<UnitSystem>,
    pub geometry: Option<Geometry>,
    pub modal: Option<ModalModel>,
    pub modes: Vec<ModeSummary>,
}

/// The summary the page's cards and `inspect --json` carry.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct UffExtrasSummary {
    pub headers: Vec<String>,
    pub units: Vec<String>,
    pub geometry: Option<GeometrySummary>,
    /// The node table itself (global m), systems and trace lines, for a
    /// drawing.
    pub geometry_table: Option<Geometry>,
    pub modes: Vec<ModeSummary>,
}

impl UffExtras {
    pub fn is_empty(&self) -> bool {
        self.headers.is_empty()
            && self.units.is_empty()
            && self.geometry.is_none()
            && self.modal.is_none()
    }
    /// Lines for `inspect` (header, units, geometry, modes).
    pub fn describe(&self) -> Vec<String> {
        let mut out: Vec<String> = self.headers.iter().map(|h| h.describe()).collect();
        out.extend(self.units.iter().map(|u| u.describe()));
        if let Some(g) = &self.geometry {
            out.push(g.describe());
        }
        if let Some(m) = &self.modal {
            out.push(format!(
                "modal model '{}' (dataset 55): {} mode(s) at {} DOF(s); synthesized on a grid by a recipe component {{\"file\": ..., \"grid\": ...}} or convert --grid START:STOP:STEP",
                crate::error::quote(&m.name),
                self.modes.len(),
                m.dofs.len()
            ));
            for s in &self.modes {
                out.push(format!(
                    "  mode {} ({}, line {}): {} Hz, damping ratio {}",
                    s.mode, s.kind, s.line, s.freq_hz, s.zeta
                ));
            }
        }
        out
    }
    pub fn summary(&self) -> UffExtrasSummary {
        UffExtrasSummary {
            headers: self.headers.iter().map(|h| h.describe()).collect(),
            units: self.units.iter().map(|u| u.describe()).collect(),
            geometry: self.geometry.as_ref().map(|g| g.summary()),
            geometry_table: self.geometry.clone(),
            modes: self.modes.clone(),
        }
    }
}

/// Read the datasets besides 58 of a UFF file (`Ok(None)` when it holds
/// none). The modal model's DOFs get `component`; it is named after the
/// model name of a dataset 151, else `component`. Also returns the file's
/// remarks (one line for each dataset besides 58 and what was done with it)
/// and whether the file holds any dataset 58.
pub fn read_extras(
    bytes: &[u8],
    file: &str,
    component: &str,
) -> Result<(Option<UffExtras>, Vec<String>, bool)> {
    let mut p = parse_file(bytes, file)?;
    let has58 = !p.datasets.is_empty();
    p.datasets = Vec::new();
    let (x, warnings) = extras_of(p, file, component)?;
    Ok((x, warnings, has58))
}

/// The extras of a parsed file (its datasets 58 are not looked at) and the
/// parse's remarks with the geometry's and modal model's notes.
pub(super) fn extras_of(
    p: Parsed,
    file: &str,
    component: &str,
) -> Result<(Option<UffExtras>, Vec<String>)> {
    let mut warnings = p.remarks;
    let geometry = if p.geometry.is_empty() {
        None
    } else {
        Some(p.geometry.build(file, &mut warnings)?)
    };
    let (modal, modes) = if p.modes.is_empty() {
        (None, Vec::new())
    } else {
        let name = p
            .headers
            .first()
            .map(|h| h.model.clone())
            .filter(|m| !m.is_empty() && m != "NONE")
            .unwrap_or_else(|| component.to_string());
        let (m, l) = build_model(file, &name, component, &p.modes, &mut warnings)?;
        (Some(m), l)
    };
    let x = UffExtras {
        headers: p.headers,
        units: p.units,
        geometry,
        modal,
        modes,
    };
    Ok(((!x.is_empty()).then_some(x), warnings))
}

/// A number in at most `width` columns (leading blank kept): its shortest
/// round-trip text when it fits, else as many significant digits as fit.
fn field(v: f64, width: usize) -> String {
    let short = super::write::shortest(v);
    if short.len() < width {
        return format!("{short:>width$}");
    }
    for digits in (1..=16).rev() {
        let s = format!("{:.*E}", digits, v);
        if s.len() < width {
            return format!("{s:>width$}");
        }
    }
    format!("{:>width$}", format!("{:.0E}", v))
}

/// Geometry as one dataset 2411 (global coordinates in m, definition and
/// displacement systems 0: the file says nothing of systems, so a reader
/// of it sees the same global coordinates). A displacement system other
/// than 0 is refused (its directions would be lost).
pub fn write_2411(g: &Geometry) -> Result<String> {
    let mut s = String::from("    -1\n  2411\n");
    for n in &g.nodes {
        if n.disp_cs != 0 {
            return Err(Error::unsupported(format!(
                "node {} measures its DOFs in coordinate system {}; mortise writes global nodes only (displacement system 0)",
                n.id, n.disp_cs
            ))
            .field("geometry"));
        }
        s.push_str(&format!("{:10}{:10}{:10}{:10}\n", n.id, 0, 0, n.color));
        for v in n.xyz {
            s.push_str(&field(v, 25));
        }
        s.push('\n');
    }
    s.push_str("    -1\n");
    Ok(s)
}

/// A modal model as datasets 55 (one a mode; see the module docs for the
/// columns). Its DOFs must be, node by node, X Y Z (or X Y Z RX RY RZ),
/// positive, with integer node numbers; residual terms cannot be written
/// and are refused.
pub fn write_55(m: &ModalModel) -> Result<String> {
    m.validate()?;
    if !m.residuals.is_empty() {
        return Err(Error::unsupported(
            "dataset 55 has no place for residual terms; the modal model has some",
        )
        .field("residuals"));
    }
    let six = Direction::SPATIAL;
    let ndv = if m.dofs.len() % 6 == 0
        && m.dofs
            .chunks(6)
            .all(|c| c.iter().zip(six).all(|(d, w)| d.dir == w))
    {
        6
    } else {
        3
    };
    let mut nodes = Vec::new();
    for (k, c) in m.dofs.chunks(ndv).enumerate() {
        let ok = c.len() == ndv
            && c.iter().zip(six).all(|(d, w)| d.dir == w && d.positive)
            && c.iter().all(|d| d.node == c[0].node);
        let id = c[0].node.parse::<i64>().ok().filter(|v| *v > 0);
        match (ok, id) {
            (true, Some(id)) => nodes.push(id),
            _ => {
                return Err(Error::unsupported(format!(
                    "dataset 55 gives the values of each node in the order X Y Z (RX RY RZ), positive, at integer node numbers; DOFs {} to {} of the model are {}",
                    k * ndv + 1,
                    k * ndv + c.len(),
                    crate::frf::labels(c)
                ))
                .field("dofs"))
            }
        }
    }
    let data_ch = if ndv == 6 { 3 } else { 2 };
    let mut s = String::new();
    let head = |s: &mut String, analysis: i64, dtype: i64| {
        s.push_str("    -1\n    55\n");
        s.push_str(&format!("{:<80}\n", crate::error::quote(&m.name)));
        for id in ["mortise modal model", "NONE", "NONE", "NONE"] {
            s.push_str(&format!("{id:<80}\n"));
        }
        s.push_str(&format!(
            "{:10}{:10}{:10}{:10}{:10}{:10}\n",
            1, analysis, data_ch, 8, dtype, ndv
        ));
    };
    let mut n_mode = 0;
    for md in &m.modes {
        n_mode += 1;
        head(&mut s, 2, 2);
        s.push_str(&format!("{:10}{:10}{:10}{:10}\n", 2, 4, 1, n_mode));
        for v in [md.freq, md.modal_mass, md.zeta, md.eta] {
            s.push_str(&field(v, 13));
        }
        s.push('\n');
        for (k, id) in nodes.iter().enumerate() {
            s.push_str(&format!("{id:10}\n"));
            for v in &md.shape[k * ndv..(k + 1) * ndv] {
                s.push_str(&field(*v, 13));
            }
            s.push('\n');
        }
        s.push_str("    -1\n");
    }
    for cm in &m.complex_modes {
        n_mode += 1;
        head(&mut s, 3, 5);
        let wr = 2.0 * std::f64::consts::PI * cm.freq;
        let lam = num_complex::Complex64::new(-cm.zeta * wr, wr * (1.0 - cm.zeta * cm.zeta).sqrt());
        s.push_str(&format!("{:10}{:10}{:10}{:10}\n", 2, 6, 1, n_mode));
        for v in [lam.re, lam.im, 1.0, 0.0, -lam.re, -lam.im] {
            s.push_str(&field(v, 13));
        }
        s.push('\n');
        for (k, id) in nodes.iter().enumerate() {
            s.push_str(&format!("{id:10}\n"));
            let vals = &cm.shape[k * ndv..(k + 1) * ndv];
            let flat: Vec<f64> = vals.iter().flat_map(|c| [c.re, c.im]).collect();
            for line in flat.chunks(6) {
                for v in line {
                    s.push_str(&field(*v, 13));
                }
                s.push('\n');
            }
        }
        s.push_str("    -1\n");
    }
    Ok(s)
}
