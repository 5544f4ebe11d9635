//! The FRF set: one frequency grid, output and input DOFs, the quantity on
//! each side, and a complex value for every (line, output, input).
//!
//! Layout is frequency-major: the value of output `i`, input `j` at line `k`
//! is `data[(k * n_out + i) * n_in + j]`, so each line is one small dense
//! row-major matrix. Missing entries are explicit (`present[i * n_in + j] ==
//! false`) and hold NaN; operations that need them say which are missing.
//!
//! All values are SI inside (see [`crate::units`]); the time convention is
//! e^{+iωt} (see the crate docs).

use crate::error::{Error, Result};
use crate::units::Quantity;
use num_complex::Complex64;
use std::fmt;

/// A direction at a node. `Scalar` is a point without direction (a microphone).
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, serde::Serialize, serde::Deserialize,
)]
pub enum Direction {
    X,
    Y,
    Z,
    RX,
    RY,
    RZ,
    Scalar,
}

impl Direction {
    /// The six directions of a node in space, translations first.
    pub const SPATIAL: [Direction; 6] = [
        Direction::X,
        Direction::Y,
        Direction::Z,
        Direction::RX,
        Direction::RY,
        Direction::RZ,
    ];
    pub fn is_rotational(self) -> bool {
        matches!(self, Direction::RX | Direction::RY | Direction::RZ)
    }
    pub fn as_str(self) -> &'static str {
        match self {
            Direction::X => "X",
            Direction::Y => "Y",
            Direction::Z => "Z",
            Direction::RX => "RX",
            Direction::RY => "RY",
            Direction::RZ => "RZ",
            Direction::Scalar => "S",
        }
    }
    pub fn parse(s: &str) -> Option<Direction> {
        Some(match s.to_ascii_uppercase().as_str() {
            "X" => Direction::X,
            "Y" => Direction::Y,
            "Z" => Direction::Z,
            "RX" => Direction::RX,
            "RY" => Direction::RY,
            "RZ" => Direction::RZ,
            "S" | "" => Direction::Scalar,
            _ => return None,
        })
    }
}

/// One degree of freedom: component namespace, node identifier, direction and sign.
///
/// Text form: `component:node+X` (`+`/`-` then X Y Z RX RY RZ), or
/// `component:node` for a scalar point. The component may be empty (`:12+Z`
/// or simply `12+Z`). Node identifiers are text: numbers from UFF files stay
/// their decimal form.
#[derive(
    Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, serde::Serialize, serde::Deserialize,
)]
pub struct Dof {
    pub component: String,
    pub node: String,
    pub dir: Direction,
    /// false for the negative direction.
    pub positive: bool,
}

impl Dof {
    pub fn new(component: &str, node: &str, dir: Direction) -> Dof {
        Dof {
            component: component.to_string(),
            node: node.to_string(),
            dir,
            positive: true,
        }
    }
    pub fn scalar(component: &str, node: &str) -> Dof {
        Dof::new(component, node, Direction::Scalar)
    }
    /// +1.0 or -1.0.
    pub fn sign(&self) -> f64 {
        if self.positive {
            1.0
        } else {
            -1.0
        }
    }
    /// The same DOF with a positive direction.
    pub fn unsigned(&self) -> Dof {
        Dof {
            positive: true,
            ..self.clone()
        }
    }
    /// True when both name the same physical DOF (sign may differ).
    pub fn same_place(&self, o: &Dof) -> bool {
        self.component == o.component && self.node == o.node && self.dir == o.dir
    }
    pub fn with_component(&self, c: &str) -> Dof {
        Dof {
            component: c.to_string(),
            ..self.clone()
        }
    }
    /// Parse the text form; `default_component` applies when none is given.
    pub fn parse(text: &str, default_component: &str) -> Result<Dof> {
        let t = text.trim();
        let (comp, rest) = match t.rfind(':') {
            Some(p) => (&t[..p], &t[p + 1..]),
            None => (default_component, t),
        };
        if rest.is_empty() {
            return Err(Error::dof(format!(
                "DOF '{}': missing node; expected component:node+X (directions X Y Z RX RY RZ, or none for a scalar point)",
                crate::error::quote(text)
            )));
        }
        // split at the last '+' or '-' followed by a direction
        if let Some(p) = rest.rfind(['+', '-']) {
            let dir_s = &rest[p + 1..];
            if let Some(dir) = Direction::parse(dir_s) {
                if p > 0 && dir != Direction::Scalar {
                    return Ok(Dof {
                        component: comp.to_string(),
                        node: rest[..p].to_string(),
                        dir,
                        positive: rest.as_bytes()[p] == b'+',
                    });
                }
            }
            if p > 0
                && !dir_s.is_empty()
                && dir_s.chars().all(|c| c.is_ascii_alphabetic())
                && dir_s.len() <= 2
            {
                return Err(Error::dof(format!(
                    "DOF '{}': unknown direction '{dir_s}'; expected X, Y, Z, RX, RY or RZ",
                    crate::error::quote(text)
                )));
            }
        }
        Ok(Dof::scalar(comp, rest))
    }
}

impl fmt::Display for Dof {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if !self.component.is_empty() {
            write!(f, "{}:", self.component)?;
        }
        write!(f, "{}", self.node)?;
        if self.dir != Direction::Scalar {
            write!(
                f,
                "{}{}",
                if self.positive { '+' } else { '-' },
                self.dir.as_str()
            )?;
        }
        Ok(())
    }
}

/// The kind of an FRF, from its output and input quantities.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum FrfKind {
    /// displacement / force
    Receptance,
    /// velocity / force
    Mobility,
    /// acceleration / force
    Accelerance,
    /// force / displacement
    DynamicStiffness,
    /// force / velocity
    Impedance,
    /// force / acceleration
    ApparentMass,
    /// motion / motion of the same order, or force / force
    Transmissibility,
    /// pressure / force
    VibroAcoustic,
    /// any other pair
    Other,
}

impl FrfKind {
    pub fn of(out: Quantity, inp: Quantity) -> FrfKind {
        use Quantity::*;
        match (out, inp) {
            (Displacement, Force) => FrfKind::Receptance,
            (Velocity, Force) => FrfKind::Mobility,
            (Acceleration, Force) => FrfKind::Accelerance,
            (Force, Displacement) => FrfKind::DynamicStiffness,
            (Force, Velocity) => FrfKind::Impedance,
            (Force, Acceleration) => FrfKind::ApparentMass,
            (Force, Force) => FrfKind::Transmissibility,
            (a, b) if a.is_motion() && a == b => FrfKind::Transmissibility,
            (Pressure, Force) => FrfKind::VibroAcoustic,
            _ => FrfKind::Other,
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            FrfKind::Receptance => "receptance",
            FrfKind::Mobility => "mobility",
            FrfKind::Accelerance => "accelerance",
            FrfKind::DynamicStiffness => "dynamic-stiffness",
            FrfKind::Impedance => "impedance",
            FrfKind::ApparentMass => "apparent-mass",
            FrfKind::Transmissibility => "transmissibility",
            FrfKind::VibroAcoustic => "vibro-acoustic",
            FrfKind::Other => "other",
        }
    }
    /// The (output, input) quantities of a named kind, where the name fixes them.
    pub fn quantities(name: &str) -> Result<(Quantity, Quantity)> {
        use Quantity::*;
        Ok(match name.trim().to_ascii_lowercase().as_str() {
            "receptance" | "compliance" => (Displacement, Force),
            "mobility" => (Velocity, Force),
            "accelerance" | "inertance" => (Acceleration, Force),
            "dynamic-stiffness" | "stiffness" => (Force, Displacement),
            "impedance" => (Force, Velocity),
            "apparent-mass" => (Force, Acceleration),
            _ => {
                return Err(Error::usage(format!(
                    "unknown FRF kind '{name}'; expected receptance, mobility, accelerance, dynamic-stiffness, impedance or apparent-mass"
                )))
            }
        })
    }
}

impl fmt::Display for FrfKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// What a set holds when it is a signal spectrum rather than an FRF.
///
/// A spectrum is stored as an [`FrfSet`] with one input column: the outputs
/// are the DOFs the spectrum acts at, the single input is a dimensionless
/// reference (`Dof::scalar("", "ref")`). The kind says how to read the values.
/// A cross spectrum is the exception: its single input is the reference DOF
/// (the channel the phase is measured against), `in_qty` its quantity, and
/// the values are in (output unit)·(reference unit).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SignalKind {
    /// Complex line spectrum, peak amplitude and phase of each harmonic.
    Peak,
    /// Complex line spectrum, RMS amplitude and phase of each line.
    Rms,
    /// Autopower per line (unit², mean square), phase unknown.
    Autopower,
    /// Power spectral density (unit²/Hz), phase unknown.
    Psd,
    /// Cross spectrum per line (output unit · reference unit, complex; the
    /// phase is that of the output relative to the reference DOF).
    Cross,
    /// Energy spectral density (unit²·s/Hz) of a transient, phase unknown.
    Esd,
}

impl SignalKind {
    /// Every kind.
    pub const ALL: [SignalKind; 6] = [
        SignalKind::Peak,
        SignalKind::Rms,
        SignalKind::Autopower,
        SignalKind::Psd,
        SignalKind::Cross,
        SignalKind::Esd,
    ];

    pub fn name(self) -> &'static str {
        match self {
            SignalKind::Peak => "peak",
            SignalKind::Rms => "rms",
            SignalKind::Autopower => "autopower",
            SignalKind::Psd => "psd",
            SignalKind::Cross => "cross",
            SignalKind::Esd => "esd",
        }
    }
    /// True when the values carry phase.
    pub fn has_phase(self) -> bool {
        matches!(self, SignalKind::Peak | SignalKind::Rms | SignalKind::Cross)
    }
    /// The SI unit of a spectrum of this kind whose output unit is `out`
    /// (and, for a cross spectrum, whose reference unit is `reference`).
    pub fn unit(self, out: &str, reference: &str) -> String {
        let p = |u: &str| {
            if u.contains(['/', '*', '^']) {
                format!("({u})")
            } else {
                u.to_string()
            }
        };
        match self {
            SignalKind::Peak | SignalKind::Rms => out.to_string(),
            SignalKind::Autopower => format!("{}^2", p(out)),
            SignalKind::Psd => format!("{}^2/Hz", p(out)),
            SignalKind::Esd => format!("{}^2*s/Hz", p(out)),
            SignalKind::Cross if out == reference => format!("{}^2", p(out)),
            SignalKind::Cross => format!("{}*{}", p(out), p(reference)),
        }
    }
    /// What the kind is, in words, for messages.
    pub fn describe(self) -> &'static str {
        match self {
            SignalKind::Peak => "a peak line spectrum",
            SignalKind::Rms => "an RMS line spectrum",
            SignalKind::Autopower => "an auto spectrum (autopower)",
            SignalKind::Psd => "a power spectral density",
            SignalKind::Cross => "a cross spectrum",
            SignalKind::Esd => "an energy spectral density",
        }
    }
}

/// Where a set came from.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct Provenance {
    /// File name as given (no directories are stored).
    pub file: String,
    /// SHA-256 of the file's bytes, lower-case hex.
    pub sha256: String,
    /// Detected format, e.g. "uff58-ascii".
    pub format: String,
    /// Import options as text (column map, component name...).
    #[serde(default)]
    pub options: String,
}

/// A set of FRFs on one grid. See the module docs for the layout.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FrfSet {
    /// A short name (component or result name).
    pub name: String,
    /// Frequencies in Hz, strictly increasing.
    pub freqs: Vec<f64>,
    pub outputs: Vec<Dof>,
    pub inputs: Vec<Dof>,
    pub out_qty: Quantity,
    pub in_qty: Quantity,
    /// n_lines × n_out × n_in values, frequency-major, SI units.
    pub data: Vec<Complex64>,
    /// n_out × n_in flags; false = entry missing (its data are NaN).
    pub present: Vec<bool>,
    /// Optional coherence, same layout as `data` (NaN where not supplied).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub coherence: Option<Vec<f64>>,
    #[serde(default)]
    pub provenance: Vec<Provenance>,
    /// Non-fatal remarks made while building the set.
    #[serde(default)]
    pub warnings: Vec<String>,
    /// `Some` when the set is a signal spectrum (see [`SignalKind`]), `None` for FRFs.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub signal: Option<SignalKind>,
}

impl FrfSet {
    /// A complete set filled with zeros.
    pub fn zeros(
        name: &str,
        freqs: Vec<f64>,
        outputs: Vec<Dof>,
        inputs: Vec<Dof>,
        out_qty: Quantity,
        in_qty: Quantity,
    ) -> FrfSet {
        let n = freqs.len() * outputs.len() * inputs.len();
        let present = vec![true; outputs.len() * inputs.len()];
        FrfSet {
            name: name.to_string(),
            freqs,
            outputs,
            inputs,
            out_qty,
            in_qty,
            data: vec![Complex64::new(0.0, 0.0); n],
            present,
            coherence: None,
            provenance: Vec::new(),
            warnings: Vec::new(),
            signal: None,
        }
    }

    pub fn n_lines(&self) -> usize {
        self.freqs.len()
    }
    pub fn n_out(&self) -> usize {
        self.outputs.len()
    }
    pub fn n_in(&self) -> usize {
        self.inputs.len()
    }
    pub fn kind(&self) -> FrfKind {
        FrfKind::of(self.out_qty, self.in_qty)
    }
    #[inline]
    pub fn idx(&self, k: usize, i: usize, j: usize) -> usize {
        (k * self.outputs.len() + i) * self.inputs.len() + j
    }
    #[inline]
    pub fn get(&self, k: usize, i: usize, j: usize) -> Complex64 {
        self.data[self.idx(k, i, j)]
    }
    #[inline]
    pub fn set(&mut self, k: usize, i: usize, j: usize, v: Complex64) {
        let n = self.idx(k, i, j);
        self.data[n] = v;
    }
    /// The matrix of line `k`, row-major n_out × n_in.
    pub fn line(&self, k: usize) -> &[Complex64] {
        let m = self.outputs.len() * self.inputs.len();
        &self.data[k * m..(k + 1) * m]
    }
    pub fn line_mut(&mut self, k: usize) -> &mut [Complex64] {
        let m = self.outputs.len() * self.inputs.len();
        &mut self.data[k * m..(k + 1) * m]
    }
    pub fn is_present(&self, i: usize, j: usize) -> bool {
        self.present[i * self.inputs.len() + j]
    }
    pub fn is_complete(&self) -> bool {
        self.present.iter().all(|&p| p)
    }
    /// One FRF (output i, input j) over all lines.
    pub fn column(&self, i: usize, j: usize) -> Vec<Complex64> {
        (0..self.n_lines()).map(|k| self.get(k, i, j)).collect()
    }
    pub fn out_index(&self, d: &Dof) -> Option<usize> {
        self.outputs.iter().position(|o| o == d)
    }
    pub fn in_index(&self, d: &Dof) -> Option<usize> {
        self.inputs.iter().position(|o| o == d)
    }
    /// Index of the output at the same place as `d`, whatever its sign.
    pub fn out_place(&self, d: &Dof) -> Option<usize> {
        self.outputs.iter().position(|o| o.same_place(d))
    }
    /// Index of the input at the same place as `d`, whatever its sign.
    pub fn in_place(&self, d: &Dof) -> Option<usize> {
        self.inputs.iter().position(|o| o.same_place(d))
    }
    /// Labels of missing entries, "out / in".
    pub fn missing_entries(&self) -> Vec<String> {
        let mut v = Vec::new();
        for i in 0..self.n_out() {
            for j in 0..self.n_in() {
                if !self.is_present(i, j) {
                    v.push(format!("{} / {}", self.outputs[i], self.inputs[j]));
                }
            }
        }
        v
    }
    /// Error unless every entry is present.
    pub fn require_complete(&self, what: &str) -> Result<()> {
        let m = self.missing_entries();
        if m.is_empty() {
            return Ok(());
        }
        let shown: Vec<_> = m.iter().take(8).cloned().collect();
        Err(Error::missing(format!(
            "{what} needs every entry of '{}', but {} of {} are missing: {}{}",
            self.name,
            m.len(),
            self.n_out() * self.n_in(),
            shown.join(", "),
            if m.len() > 8 { ", ..." } else { "" }
        )))
    }
    /// ω = 2πf of line k.
    pub fn omega(&self, k: usize) -> f64 {
        2.0 * std::f64::consts::PI * self.freqs[k]
    }

    /// Check the invariants: sizes, strictly increasing finite grid, finite
    /// present data, NaN missing data, unique DOFs.
    pub fn validate(&self) -> Result<()> {
        self.validate_layout()?;
        // line by line against the presence mask (one pass over the values,
        // without a branch per value; the place told when a line fails)
        let per_line = self.n_out() * self.n_in();
        for (k, line) in self.data.chunks_exact(per_line.max(1)).enumerate() {
            let finite = line.iter().zip(&self.present).fold(true, |ok, (v, &p)| {
                ok & (!p | (v.re.is_finite() & v.im.is_finite()))
            });
            if finite {
                continue;
            }
            for (e, (v, &p)) in line.iter().zip(&self.present).enumerate() {
                if p && !(v.re.is_finite() && v.im.is_finite()) {
                    let (i, j) = (e / self.n_in(), e % self.n_in());
                    return Err(Error::numeric(format!(
                        "'{}': value {} / {} at {} Hz is not finite",
                        self.name, self.outputs[i], self.inputs[j], self.freqs[k]
                    )));
                }
            }
        }
        Ok(())
    }

    /// [`Self::validate`] without its pass over the values: for a reader
    /// that checked each present value finite as it placed it.
    pub(crate) fn validate_layout(&self) -> Result<()> {
        let n = self.n_lines() * self.n_out() * self.n_in();
        if self.data.len() != n {
            return Err(Error::numeric(format!(
                "'{}': {} values for {} lines × {} outputs × {} inputs",
                self.name,
                self.data.len(),
                self.n_lines(),
                self.n_out(),
                self.n_in()
            )));
        }
        if self.present.len() != self.n_out() * self.n_in() {
            return Err(Error::numeric(format!(
                "'{}': presence mask has the wrong size",
                self.name
            )));
        }
        crate::grid::check_grid(&self.freqs)
            .map_err(|e| e.field(format!("frequency grid of '{}'", self.name)))?;
        for (what, dofs) in [("output", &self.outputs), ("input", &self.inputs)] {
            // one pass with a set of places: linear in the DOF count
            let mut seen = std::collections::HashSet::with_capacity(dofs.len());
            for d in dofs {
                if !seen.insert((d.component.as_str(), d.node.as_str(), d.dir)) {
                    return Err(Error::dof(format!(
                        "'{}': {what} DOF {} appears twice",
                        crate::error::quote(&self.name),
                        crate::error::quote(&d.to_string())
                    )));
                }
            }
        }
        Ok(())
    }

    /// Rename the component namespace of every DOF.
    pub fn set_component(&mut self, comp: &str) {
        for d in self.outputs.iter_mut().chain(self.inputs.iter_mut()) {
            d.component = comp.to_string();
        }
    }

    /// A new set with the chosen outputs and inputs (by index).
    pub fn select(&self, outs: &[usize], ins: &[usize]) -> FrfSet {
        let mut s = FrfSet::zeros(
            &self.name,
            self.freqs.clone(),
            outs.iter().map(|&i| self.outputs[i].clone()).collect(),
            ins.iter().map(|&j| self.inputs[j].clone()).collect(),
            self.out_qty,
            self.in_qty,
        );
        for (a, &i) in outs.iter().enumerate() {
            for (b, &j) in ins.iter().enumerate() {
                s.present[a * ins.len() + b] = self.is_present(i, j);
            }
        }
        for k in 0..self.n_lines() {
            for (a, &i) in outs.iter().enumerate() {
                for (b, &j) in ins.iter().enumerate() {
                    s.set(k, a, b, self.get(k, i, j));
                }
            }
        }
        if let Some(c) = &self.coherence {
            let mut cc = vec![f64::NAN; s.data.len()];
            for k in 0..self.n_lines() {
                for (a, &i) in outs.iter().enumerate() {
                    for (b, &j) in ins.iter().enumerate() {
                        cc[s.idx(k, a, b)] = c[self.idx(k, i, j)];
                    }
                }
            }
            s.coherence = Some(cc);
        }
        s.provenance = self.provenance.clone();
        s.warnings = self.warnings.clone();
        s.signal = self.signal;
        s
    }

    /// Select by DOF labels (exact match, sign included).
    pub fn select_dofs(&self, outs: &[Dof], ins: &[Dof]) -> Result<FrfSet> {
        let oi = outs
            .iter()
            .map(|d| {
                self.out_index(d).ok_or_else(|| {
                    Error::dof(format!(
                        "'{}' has no output DOF {d}; it has {}",
                        self.name,
                        labels(&self.outputs)
                    ))
                })
            })
            .collect::<Result<Vec<_>>>()?;
        let ii = ins
            .iter()
            .map(|d| {
                self.in_index(d).ok_or_else(|| {
                    Error::dof(format!(
                        "'{}' has no input DOF {d}; it has {}",
                        self.name,
                        labels(&self.inputs)
                    ))
                })
            })
            .collect::<Result<Vec<_>>>()?;
        Ok(self.select(&oi, &ii))
    }

    /// Change the motion order of either side by multiplying with (iω)^n.
    ///
    /// Output side: receptance → mobility is ×iω. Input side: a motion input
    /// of higher order divides, e.g. dynamic stiffness → impedance is ÷iω.
    /// Force ↔ motion swaps need [`FrfSet::invert`].
    pub fn to_quantities(&self, out_q: Quantity, in_q: Quantity) -> Result<FrfSet> {
        if let Some(k @ (SignalKind::Cross | SignalKind::Esd)) = self.signal {
            return Err(Error::quantity(format!(
                "'{}' is {}; its quantities are not changed by (iω)^n here",
                self.name,
                k.describe()
            )));
        }
        let p_out = order_change(self.out_qty, out_q, "output", &self.name)?;
        let p_in = order_change(self.in_qty, in_q, "input", &self.name)?;
        let p = p_out - p_in;
        let mut s = self.clone();
        s.out_qty = out_q;
        s.in_qty = in_q;
        if p != 0 {
            let nm = self.n_out() * self.n_in();
            for k in 0..self.n_lines() {
                let iw = Complex64::new(0.0, self.omega(k));
                let f = iw.powi(p);
                for v in &mut s.data[k * nm..(k + 1) * nm] {
                    *v *= f;
                }
            }
        }
        Ok(s)
    }

    /// Convert to a named kind: a motion-order change, or a matrix inversion
    /// (force ↔ motion) when the kind needs it.
    pub fn to_kind(&self, kind: &str) -> Result<FrfSet> {
        let (oq, iq) = FrfKind::quantities(kind)?;
        if self.out_qty.is_motion() == oq.is_motion() && self.in_qty.is_motion() == iq.is_motion() {
            return self.to_quantities(oq, iq);
        }
        if self.out_qty.is_motion()
            && self.in_qty == Quantity::Force
            && oq == Quantity::Force
            && iq.is_motion()
        {
            let inv = self.invert()?;
            return inv.to_quantities(oq, iq);
        }
        if self.out_qty == Quantity::Force
            && self.in_qty.is_motion()
            && oq.is_motion()
            && iq == Quantity::Force
        {
            let inv = self.invert()?;
            return inv.to_quantities(oq, iq);
        }
        Err(Error::quantity(format!(
            "'{}' is {} ({} per {}); it cannot be converted to {kind}",
            self.name,
            self.kind(),
            self.out_qty,
            self.in_qty
        )))
    }

    /// Invert each line's matrix: receptance ↔ dynamic stiffness.
    ///
    /// Needs a square, complete matrix whose outputs and inputs are the same
    /// DOFs. Adds a warning: inverting measured data amplifies noise and any
    /// missing or truncated DOF changes every entry.
    pub fn invert(&self) -> Result<FrfSet> {
        self.require_complete("matrix inversion")?;
        if self.n_out() != self.n_in() {
            return Err(Error::quantity(format!(
                "'{}': inversion needs a square matrix, this one has {} outputs and {} inputs",
                self.name,
                self.n_out(),
                self.n_in()
            )));
        }
        for (o, i) in self.outputs.iter().zip(&self.inputs) {
            if o != i {
                return Err(Error::dof(format!(
                    "'{}': inversion needs outputs and inputs at the same DOFs in the same order; output {o} faces input {i}",
                    self.name
                )));
            }
        }
        let n = self.n_out();
        let mut s = self.clone();
        s.out_qty = self.in_qty;
        s.in_qty = self.out_qty;
        s.coherence = None;
        for k in 0..self.n_lines() {
            let m = nalgebra::DMatrix::from_row_slice(n, n, self.line(k));
            let inv = m.try_inverse().ok_or_else(|| {
                Error::numeric(format!(
                    "'{}': matrix at {} Hz is singular",
                    self.name, self.freqs[k]
                ))
            })?;
            let dst = s.line_mut(k);
            for i in 0..n {
                for j in 0..n {
                    dst[i * n + j] = inv[(i, j)];
                }
            }
        }
        s.warnings.push(format!(
            "'{}' was inverted line by line: measurement noise and any DOF left out of the matrix change every entry of the result; check the condition number before trusting it",
            self.name
        ));
        Ok(s)
    }
}

fn order_change(from: Quantity, to: Quantity, side: &str, name: &str) -> Result<i32> {
    if from == to {
        return Ok(0);
    }
    match (from.motion_order(), to.motion_order()) {
        (Some(a), Some(b)) => Ok(b - a),
        _ => Err(Error::quantity(format!(
            "'{name}': the {side} side is {from} and cannot become {to} by a (iω)^n factor"
        ))),
    }
}

/// Comma-separated labels, shortened after 12.
pub fn labels(dofs: &[Dof]) -> String {
    let mut s: Vec<String> = dofs.iter().take(12).map(|d| d.to_string()).collect();
    if dofs.len() > 12 {
        s.push(format!("... ({} in all)", dofs.len()));
    }
    if s.is_empty() {
        "none".into()
    } else {
        s.join(", ")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dof_text_round_trip() {
        for t in ["casing:3+Z", "wall:A1-RX", "room:bed", "12+Y"] {
            let d = Dof::parse(t, "").unwrap();
            assert_eq!(d.to_string(), t);
        }
        let d = Dof::parse("7-Z", "bracket").unwrap();
        assert_eq!(
            d,
            Dof {
                component: "bracket".into(),
                node: "7".into(),
                dir: Direction::Z,
                positive: false
            }
        );
        assert!(Dof::parse("c:4+Q", "")
            .unwrap_err()
            .message
            .contains("unknown direction 'Q'"));
        assert!(Dof::parse("c:", "").is_err());
    }

    fn sdof(freqs: &[f64]) -> FrfSet {
        // SDOF receptance 1/(k - ω²m + iωc), e^{+iωt}
        let (m, k, c) = (2.0, 8.0e4, 15.0);
        let d = Dof::new("s", "1", Direction::Z);
        let mut s = FrfSet::zeros(
            "sdof",
            freqs.to_vec(),
            vec![d.clone()],
            vec![d],
            Quantity::Displacement,
            Quantity::Force,
        );
        for l in 0..freqs.len() {
            let w = s.omega(l);
            s.set(l, 0, 0, 1.0 / Complex64::new(k - w * w * m, w * c));
        }
        s
    }

    #[test]
    fn kind_conversion_factors() {
        let s = sdof(&[1.0, 10.0, 50.0]);
        let mob = s.to_kind("mobility").unwrap();
        let acc = s.to_kind("accelerance").unwrap();
        for l in 0..3 {
            let w = s.omega(l);
            let h = s.get(l, 0, 0);
            assert!((mob.get(l, 0, 0) - Complex64::new(0.0, w) * h).norm() < 1e-15 * h.norm() * w);
            assert!((acc.get(l, 0, 0) + w * w * h).norm() < 1e-14 * h.norm() * w * w);
        }
        assert_eq!(acc.kind(), FrfKind::Accelerance);
        let back = acc.to_kind("receptance").unwrap();
        for l in 0..3 {
            assert!((back.get(l, 0, 0) - s.get(l, 0, 0)).norm() < 1e-12 * s.get(l, 0, 0).norm());
        }
    }

    #[test]
    fn dynamic_stiffness_by_inversion_warns() {
        let s = sdof(&[5.0, 20.0]);
        let k = s.to_kind("dynamic-stiffness").unwrap();
        assert_eq!(k.kind(), FrfKind::DynamicStiffness);
        let w = s.omega(1);
        let want = Complex64::new(8.0e4 - w * w * 2.0, w * 15.0);
        assert!((k.get(1, 0, 0) - want).norm() < 1e-9 * want.norm());
        assert!(k.warnings.iter().any(|w| w.contains("inverted")));
    }

    #[test]
    fn missing_entries_are_named() {
        let mut s = sdof(&[1.0]);
        s.present[0] = false;
        let e = s.invert().unwrap_err();
        assert!(e.message.contains("s:1+Z / s:1+Z"), "{}", e.message);
    }
}
