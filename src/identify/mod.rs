//! Modal identification from measured FRFs, and clean, complete FRFs
//! synthesized from the identified model.
//!
//! Measured FRFs are noisy, may miss entries and end at the measured band.
//! [`identify`] finds the poles of the band over a range of model orders,
//! keeps the stable ones (automatically or as listed), fits the residues
//! and residual terms of every measured entry with the poles fixed, scales
//! the residues into complex mode shapes where a driving point allows it,
//! and reports the quality of the fit. [`regenerate`] synthesizes the FRFs
//! from the result on any grid inside the fitted band, filling missing
//! entries from the mode shapes when asked.
//!
//! The stages, one file each:
//! * [`lscf`]: poles per order, by the poly-reference least-squares
//!   complex-frequency-domain estimator (Guillaume, Verboven, Vanlanduit,
//!   Van der Auweraer and Peeters, "A poly-reference implementation of the
//!   least-squares complex frequency-domain estimator", IMAC XXI, 2003): a
//!   common-denominator right matrix-fraction model in the z-domain, its
//!   reduced normal equations, poles and participation vectors from a block
//!   companion matrix. Its internal variable z = e^{iωΔt} is converted to
//!   the library's e^{+iωt} poles in one function, [`lscf::z_to_s`].
//! * [`stability`]: the stabilization chart (frequency, damping, vector
//!   criteria with tolerances; defaults common practice) and the choice.
//! * [`residues`]: the frequency-domain least-squares fit of residues with
//!   a lower residual −LR/ω² and an upper residual UR per entry, with the
//!   poles fixed; the optional refinement of the poles against the FRFs
//!   (separable nonlinear least squares) which removes the bias of the
//!   z-domain model; the rank-one split of each mode's residue matrix.
//! * [`quality`]: MAC, auto-MAC, modal phase collinearity, correlation and
//!   band errors per FRF, flags for poor fits.
//!
//! Conventions: everything is fitted in receptance (displacement per
//! force; a measured mobility or accelerance is divided by iω or −ω² on the
//! way in and the synthesized FRFs multiplied back on the way out), time
//! convention e^{+iωt} (crate docs): a pole s_r = −ζ_rω_r + iω_r√(1 − ζ_r²),
//! a mode's term R/(iω − s) + R̄/(iω − s̄).
//!
//! The identified modal model is a [`ModalModel`] with complex modes
//! (residue ψ_iψ_j, as `synth::modal` defines them) and residual terms; the
//! scaling needs at least one driving point (an output at the same DOF as
//! an input). Its JSON is the `ModalModel` serde form; [`model_uff55`]
//! writes it as UFF dataset 55.

pub mod lscf;
pub mod quality;
pub mod residues;
pub mod stability;

use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use crate::limits::Limits;
use crate::synth::modal::{ComplexMode, ModalModel, Residual};
use crate::units::Quantity;
use num_complex::Complex64;
use residues::{EntryFit, Refinement};
use serde::{Deserialize, Serialize};
use stability::{ChartOrder, Chosen, PoleChoice, Refused, Tolerances};
use std::f64::consts::PI;

/// How the poles are chosen.
#[derive(Debug, Clone, PartialEq)]
pub enum Pick {
    /// Stable poles, automatically ([`stability::auto_pick`]).
    Auto,
    /// The poles nearest these frequencies ([`stability::list_pick`]).
    List(Vec<PoleChoice>),
}

/// What [`identify`] is asked to do.
#[derive(Debug, Clone, PartialEq)]
pub struct IdentifyOptions {
    /// The fitted band [f_lo, f_hi], Hz, 0 < f_lo < f_hi.
    pub band: [f64; 2],
    /// The highest model order of the pole estimate (orders 1..=max_order).
    pub max_order: usize,
    /// The inputs used as references of the pole estimate (default: all).
    pub references: Option<Vec<Dof>>,
    pub tolerances: Tolerances,
    pub pick: Pick,
    /// Refine the chosen poles against the FRFs (default true).
    pub refine: bool,
}

/// The most iterations of the pole refinement.
pub const REFINE_ITERATIONS: usize = 60;

/// One identified mode.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct IdentifiedMode {
    /// Undamped natural frequency, Hz.
    pub freq: f64,
    /// Viscous damping ratio.
    pub zeta: f64,
    /// Pole s = −ζω + iω√(1 − ζ²), rad/s, [re, im].
    pub pole: Complex64,
    /// Modal phase collinearity of the shape over the outputs.
    pub mpc: f64,
    /// Relative mismatch of the shape at the driving points (0 when the
    /// driving points agree), when the model is scaled.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub driving_point_mismatch: Option<f64>,
}

/// The fit of one measured entry.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EntryResult {
    pub output: usize,
    pub input: usize,
    pub fit: EntryFit,
}

/// Everything [`identify`] found; serialized in the step's report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Identification {
    /// The measured set's name.
    pub set: String,
    pub band: [f64; 2],
    /// Lines of the set inside the band.
    pub lines: usize,
    #[serde(with = "crate::synth::dof_text::list")]
    pub outputs: Vec<Dof>,
    #[serde(with = "crate::synth::dof_text::list")]
    pub inputs: Vec<Dof>,
    #[serde(with = "crate::synth::dof_text::list")]
    pub references: Vec<Dof>,
    /// Outputs used by the pole estimate (those with every reference present).
    #[serde(with = "crate::synth::dof_text::list")]
    pub pole_outputs: Vec<Dof>,
    pub out_qty: Quantity,
    pub in_qty: Quantity,
    /// Which entries were measured (outputs × inputs).
    pub present: Vec<bool>,
    pub max_order: usize,
    pub tolerances: Tolerances,
    /// "auto" or "list".
    pub pick: String,
    pub chosen: Vec<Chosen>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub refused: Vec<Refused>,
    pub modes: Vec<IdentifiedMode>,
    pub entries: Vec<EntryResult>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub refinement: Option<Refinement>,
    /// The scaled modal model (our JSON form), when a driving point allows it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub model: Option<ModalModel>,
    /// Why there is no model, or what it leaves out.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub model_notes: Vec<String>,
    /// Auto-MAC of the modes' shapes over the outputs.
    pub auto_mac: Vec<Vec<f64>>,
    /// Synthesized against measured, per measured FRF.
    pub fits: Vec<quality::FrfFit>,
    /// The stabilization chart: the poles of every order, classified.
    pub chart: Vec<ChartOrder>,
    /// Sum over the measured entries of |H| (receptance) on the band's
    /// lines, [Hz, m/N], for the chart's background curve.
    pub sum_magnitude: Vec<[f64; 2]>,
}

/// The data a stabilization chart is drawn from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StabilizationChart {
    pub band: [f64; 2],
    /// Per order, each pole: frequency (Hz), damping ratio, stability
    /// flags, whether it was chosen.
    pub orders: Vec<ChartOrder>,
    /// The chosen modes (Hz, damping ratio).
    pub chosen: Vec<[f64; 2]>,
    /// The background curve [Hz, Σ|H| in m/N].
    pub curve: Vec<[f64; 2]>,
}

/// The chart's data of an identification (for `src/plot` to draw).
pub fn stabilization_chart(id: &Identification) -> StabilizationChart {
    StabilizationChart {
        band: id.band,
        orders: id.chart.clone(),
        chosen: id.modes.iter().map(|m| [m.freq, m.zeta]).collect(),
        curve: id.sum_magnitude.clone(),
    }
}

/// The power of iω between receptance and a motion quantity.
fn motion_order(q: Quantity) -> Option<i32> {
    match q {
        Quantity::Displacement => Some(0),
        Quantity::Velocity => Some(1),
        Quantity::Acceleration => Some(2),
        _ => None,
    }
}

/// Check that a set is a motion-per-force FRF set.
fn check_kind(set: &FrfSet) -> Result<i32> {
    if set.signal.is_some() {
        return Err(Error::quantity(format!(
            "'{}' is a spectrum, not an FRF set; modes are identified from FRFs",
            set.name
        )));
    }
    match (motion_order(set.out_qty), set.in_qty) {
        (Some(p), Quantity::Force) => Ok(p),
        _ => Err(Error::quantity(format!(
            "'{}' is {} ({} per {}); modes are identified from receptance, mobility or accelerance (motion per force)",
            set.name,
            set.kind(),
            set.out_qty,
            set.in_qty
        ))),
    }
}

/// Index of a DOF by place among `dofs`.
fn place(dofs: &[Dof], d: &Dof) -> Option<usize> {
    dofs.iter().position(|e| e.same_place(d))
}

/// The DOFs of the model: the outputs, then the inputs at other places.
fn union_dofs(outputs: &[Dof], inputs: &[Dof]) -> Vec<Dof> {
    let mut u = outputs.to_vec();
    for d in inputs {
        if place(&u, d).is_none() {
            u.push(d.clone());
        }
    }
    u
}

/// Estimated operations of [`identify`] (pole estimate and fit).
pub fn work(set: &FrfSet, opts: &IdentifyOptions) -> f64 {
    let lines = set
        .freqs
        .iter()
        .filter(|f| **f >= opts.band[0] && **f <= opts.band[1])
        .count();
    let m = opts.references.as_ref().map_or(set.n_in(), Vec::len);
    let poles = (opts.max_order * m) / 2 + 1;
    lscf::work(lines, set.n_out(), m, opts.max_order)
        + residues::work(
            lines,
            set.n_out() * set.n_in(),
            poles,
            if opts.refine { REFINE_ITERATIONS } else { 0 },
        )
}

/// Identify the modes of `set` in a band (see the module docs). Errors
/// name the field concerned (`band`, `max_order`, `references[k]`,
/// `pick`, `pick[k]`, `tolerances.*`, `from`).
pub fn identify(set: &FrfSet, opts: &IdentifyOptions, limits: &Limits) -> Result<Identification> {
    let p_out = check_kind(set).map_err(|e| e.field("from"))?;
    opts.tolerances.check()?;
    let [lo, hi] = opts.band;
    if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && hi > lo) {
        return Err(Error::recipe(format!(
            "band {lo} to {hi} Hz; expected two frequencies 0 < low < high (the lower residual −LR/ω² needs a band above 0 Hz)"
        ))
        .field("band"));
    }
    let (g0, g1) = (set.freqs[0], set.freqs[set.n_lines() - 1]);
    if lo < g0 * (1.0 - 1e-12) || hi > g1 * (1.0 + 1e-12) {
        return Err(Error::grid(format!(
            "band {lo}–{hi} Hz reaches beyond the grid of '{}' ({g0}–{g1} Hz)",
            set.name
        ))
        .field("band"));
    }
    if opts.max_order < 2 {
        return Err(Error::recipe(format!(
            "max_order is {}; expected at least 2",
            opts.max_order
        ))
        .field("max_order"));
    }
    // references
    let refs: Vec<usize> = match &opts.references {
        None => (0..set.n_in()).collect(),
        Some(list) => {
            if list.is_empty() {
                return Err(
                    Error::recipe("'references' is empty; omit it to use every input")
                        .field("references"),
                );
            }
            let mut v = Vec::new();
            for (k, d) in list.iter().enumerate() {
                let Some(j) = set.in_place(d) else {
                    return Err(Error::dof(format!(
                        "{d} is not an input of '{}', which has {} input(s): {}; a fit with {} references needs a set with that many inputs",
                        set.name,
                        set.n_in(),
                        crate::frf::labels(&set.inputs),
                        list.len()
                    ))
                    .field(format!("references[{k}]")));
                };
                if v.contains(&j) {
                    return Err(Error::recipe(format!("{d} is given twice"))
                        .field(format!("references[{k}]")));
                }
                v.push(j);
            }
            v
        }
    };
    let m = refs.len();
    // the band's lines, in receptance
    let idx: Vec<usize> = (0..set.n_lines())
        .filter(|&k| set.freqs[k] >= lo && set.freqs[k] <= hi)
        .collect();
    let freqs: Vec<f64> = idx.iter().map(|&k| set.freqs[k]).collect();
    if freqs.len() < 2 {
        return Err(Error::grid(format!(
            "band {lo}–{hi} Hz holds {} line(s) of '{}'; expected many",
            freqs.len(),
            set.name
        ))
        .field("band"));
    }
    let (no, ni) = (set.n_out(), set.n_in());
    let present_pairs: Vec<(usize, usize)> = (0..no)
        .flat_map(|o| (0..ni).map(move |i| (o, i)))
        .filter(|&(o, i)| set.is_present(o, i))
        .collect();
    if present_pairs.is_empty() {
        return Err(Error::missing(format!("'{}' has no entry present", set.name)).field("from"));
    }
    let to_rec = |k: usize, v: Complex64| -> Complex64 {
        let iw = Complex64::new(0.0, 2.0 * PI * set.freqs[k]);
        v / iw.powi(p_out)
    };
    let mut entries: Vec<Vec<Complex64>> = Vec::with_capacity(present_pairs.len());
    for &(o, i) in &present_pairs {
        let mut col = Vec::with_capacity(idx.len());
        for &k in &idx {
            let v = set.get(k, o, i);
            if !(v.re.is_finite() && v.im.is_finite()) {
                return Err(Error::numeric(format!(
                    "entry {}/{} of '{}' is not a finite number at {} Hz (line {}); the fit needs every value of the band",
                    set.outputs[o], set.inputs[i], set.name, set.freqs[k], k + 1
                ))
                .field("from"));
            }
            col.push(to_rec(k, v));
        }
        entries.push(col);
    }
    limits.check_work(
        &format!(
            "the modal identification of '{}' ({} lines, {} × {}, orders up to {})",
            set.name,
            freqs.len(),
            no,
            ni,
            opts.max_order
        ),
        work(set, opts),
    )?;
    // pole estimate rows: outputs with every reference present
    let pole_outs: Vec<usize> = (0..no)
        .filter(|&o| refs.iter().all(|&j| set.is_present(o, j)))
        .collect();
    let rows: Vec<Vec<Complex64>> = pole_outs
        .iter()
        .map(|&o| {
            // every reference of a pole output is present (filtered above)
            let cols: Vec<Option<usize>> = refs
                .iter()
                .map(|&j| present_pairs.iter().position(|&p| p == (o, j)))
                .collect();
            let entries = &entries;
            (0..freqs.len())
                .flat_map(|k| {
                    cols.iter()
                        .map(move |c| c.map_or(Complex64::new(f64::NAN, 0.0), |e| entries[e][k]))
                })
                .collect()
        })
        .collect();
    let inp = lscf::LscfInput {
        freqs: &freqs,
        rows: &rows,
        n_ref: m,
        f_hi: hi,
    };
    let orders = lscf::poles_over_orders(&inp, opts.max_order, limits)?;
    let mut chart = stability::classify(&orders, opts.band, &opts.tolerances, m);
    let (chosen, refused, pick) = match &opts.pick {
        Pick::Auto => {
            let (c, r) = stability::auto_pick(&mut chart, &opts.tolerances, m);
            if c.is_empty() {
                let seen = if r.is_empty() {
                    "no pole was stable at two consecutive orders".to_string()
                } else {
                    r.iter()
                        .map(|x| format!("{:.2} Hz at {} order(s)", x.freq, x.stable_orders.len()))
                        .collect::<Vec<_>>()
                        .join(", ")
                };
                return Err(Error::numeric(format!(
                    "no mode found in {lo}–{hi} Hz: no pole was stable at {} orders or more up to order {} ({seen}); is there a resonance in the band? Widen the band, raise max_order, or list the poles",
                    opts.tolerances.orders, opts.max_order
                ))
                .field("pick"));
            }
            (c, r, "auto")
        }
        Pick::List(l) => (stability::list_pick(&mut chart, l, m)?, Vec::new(), "list"),
    };
    let start: Vec<Complex64> = chosen
        .iter()
        .map(|c| lscf::pole_of(c.freq, c.zeta))
        .collect();
    let (poles, refinement) = if opts.refine {
        let weights: Vec<f64> = entries
            .iter()
            .map(|h| {
                let ms = h.iter().map(|v| v.norm_sqr()).sum::<f64>() / h.len() as f64;
                if ms > 0.0 {
                    1.0 / ms.sqrt()
                } else {
                    0.0
                }
            })
            .collect();
        match residues::refine(&freqs, &entries, &weights, &start, REFINE_ITERATIONS) {
            Ok((p, r)) => (p, Some(r)),
            Err(e) => (
                start.clone(),
                Some(Refinement {
                    iterations: 0,
                    cost_before: f64::NAN,
                    cost_after: f64::NAN,
                    stop: format!("not refined: {}", e.message),
                    kept: false,
                }),
            ),
        }
    } else {
        (start.clone(), None)
    };
    let fits = residues::fit_fixed(&freqs, &entries, &poles)?;
    // shapes: rank-one split of each mode's residue matrix
    let zero = Complex64::new(0.0, 0.0);
    let mut shapes_out: Vec<Vec<Complex64>> = Vec::new();
    let mut shapes_in: Vec<Vec<Complex64>> = Vec::new();
    for r in 0..poles.len() {
        let mut mat = vec![None; no * ni];
        for (e, &(o, i)) in present_pairs.iter().enumerate() {
            mat[o * ni + i] = Some(fits[e].residues[r]);
        }
        let (a, b) = residues::rank_one(&mat, no, ni).unwrap_or((vec![zero; no], vec![zero; ni]));
        shapes_out.push(a);
        shapes_in.push(b);
    }
    let mut modes: Vec<IdentifiedMode> = poles
        .iter()
        .zip(&shapes_out)
        .map(|(&s, a)| {
            let (f, z) = lscf::freq_zeta(s);
            IdentifiedMode {
                freq: f,
                zeta: z,
                pole: s,
                mpc: quality::mpc(a),
                driving_point_mismatch: None,
            }
        })
        .collect();
    let (model, model_notes) = build_model(
        set,
        &poles,
        &shapes_out,
        &shapes_in,
        &present_pairs,
        &fits,
        &mut modes,
    );
    let id_entries: Vec<EntryResult> = present_pairs
        .iter()
        .zip(&fits)
        .map(|(&(o, i), f)| EntryResult {
            output: o,
            input: i,
            fit: f.clone(),
        })
        .collect();
    let sum_magnitude: Vec<[f64; 2]> = (0..freqs.len())
        .map(|k| [freqs[k], entries.iter().map(|h| h[k].norm()).sum()])
        .collect();
    let mut id = Identification {
        set: set.name.clone(),
        band: opts.band,
        lines: freqs.len(),
        outputs: set.outputs.clone(),
        inputs: set.inputs.clone(),
        references: refs.iter().map(|&j| set.inputs[j].clone()).collect(),
        pole_outputs: pole_outs.iter().map(|&o| set.outputs[o].clone()).collect(),
        out_qty: set.out_qty,
        in_qty: set.in_qty,
        present: set.present.clone(),
        max_order: opts.max_order,
        tolerances: opts.tolerances.clone(),
        pick: pick.into(),
        chosen,
        refused,
        modes,
        entries: id_entries,
        refinement,
        model,
        model_notes,
        auto_mac: quality::auto_mac(&shapes_out),
        fits: Vec::new(),
        chart,
        sum_magnitude,
    };
    // quality: the regenerated FRFs against the measured ones, in the set's kind
    let regen = regenerate(&id, &freqs, false)?;
    id.fits = present_pairs
        .iter()
        .map(|&(o, i)| {
            let meas: Vec<Complex64> = idx.iter().map(|&k| set.get(k, o, i)).collect();
            let syn: Vec<Complex64> = (0..freqs.len()).map(|k| regen.set.get(k, o, i)).collect();
            quality::frf_fit(
                set.outputs[o].to_string(),
                set.inputs[i].to_string(),
                &freqs,
                &meas,
                &syn,
            )
        })
        .collect();
    Ok(id)
}

/// The scaled model from the rank-one factors (see the module docs).
fn build_model(
    set: &FrfSet,
    poles: &[Complex64],
    shapes_out: &[Vec<Complex64>],
    shapes_in: &[Vec<Complex64>],
    present_pairs: &[(usize, usize)],
    fits: &[EntryFit],
    modes: &mut [IdentifiedMode],
) -> (Option<ModalModel>, Vec<String>) {
    let mut notes = Vec::new();
    let dps: Vec<(usize, usize, f64)> = (0..set.n_out())
        .flat_map(|o| (0..set.n_in()).map(move |i| (o, i)))
        .filter(|&(o, i)| set.outputs[o].same_place(&set.inputs[i]))
        .map(|(o, i)| (o, i, set.outputs[o].sign() * set.inputs[i].sign()))
        .collect();
    if dps.is_empty() {
        notes.push(format!(
            "'{}' has no driving point (an output at the same DOF as an input): the residues cannot be scaled into mode shapes, so no modal model is made and no missing entry can be filled; the measured entries are regenerated from their own residues",
            set.name
        ));
        return (None, notes);
    }
    let union = union_dofs(&set.outputs, &set.inputs);
    let mut complex_modes = Vec::new();
    for (r, &s) in poles.iter().enumerate() {
        let (a, b) = (&shapes_out[r], &shapes_in[r]);
        let (mut num, mut den) = (Complex64::new(0.0, 0.0), 0.0);
        for &(o, i, sg) in &dps {
            num += a[o].conj() * b[i] * sg;
            den += a[o].norm_sqr();
        }
        let c2 = num / den;
        if !(den > 0.0 && c2.norm() > 0.0 && c2.re.is_finite() && c2.im.is_finite()) {
            notes.push(format!(
                "mode {} ({:.3} Hz) is not seen at the driving points; no model can be scaled",
                r + 1,
                modes[r].freq
            ));
            return (None, notes);
        }
        let c = c2.sqrt();
        let mut mism: f64 = 0.0;
        for &(o, i, sg) in &dps {
            let x = a[o] * c;
            let y = b[i] / c * sg;
            if x.norm() > 0.0 {
                mism = mism.max((x - y).norm() / x.norm());
            }
        }
        modes[r].driving_point_mismatch = Some(mism);
        let shape: Vec<Complex64> = union
            .iter()
            .map(|d| match set.out_place(d) {
                Some(o) => a[o] * c * set.outputs[o].sign() * d.sign(),
                None => {
                    let i = set.in_place(d).unwrap_or(0);
                    b[i] / c * set.inputs[i].sign() * d.sign()
                }
            })
            .collect();
        let (freq, zeta) = lscf::freq_zeta(s);
        if !(freq > 0.0 && zeta > 0.0 && zeta < 1.0) {
            notes.push(format!(
                "mode {} has frequency {freq} Hz and damping ratio {zeta}: not a model mode",
                r + 1
            ));
            return (None, notes);
        }
        complex_modes.push(ComplexMode { freq, zeta, shape });
    }
    // residual terms per DOF pair (reciprocal entries averaged)
    let mut acc: std::collections::BTreeMap<(usize, usize), (f64, f64, usize)> = Default::default();
    for (e, &(o, i)) in present_pairs.iter().enumerate() {
        let (Some(a), Some(b)) = (
            place(&union, &set.outputs[o]),
            place(&union, &set.inputs[i]),
        ) else {
            continue;
        };
        let f = set.outputs[o].sign() * union[a].sign() * set.inputs[i].sign() * union[b].sign();
        let key = (a.min(b), a.max(b));
        let x = acc.entry(key).or_insert((0.0, 0.0, 0));
        x.0 += fits[e].upper * f;
        x.1 += fits[e].lower * f;
        x.2 += 1;
    }
    let residuals: Vec<Residual> = acc
        .into_iter()
        .filter_map(|((a, b), (ur, lr, n))| {
            let (ur, lr) = (ur / n as f64, lr / n as f64);
            let stiffness = (ur != 0.0 && (1.0 / ur).is_finite()).then(|| 1.0 / ur);
            let mass = (lr != 0.0 && (1.0 / lr).is_finite()).then(|| 1.0 / lr);
            (stiffness.is_some() || mass.is_some()).then(|| Residual {
                output: union[a].clone(),
                input: union[b].clone(),
                stiffness,
                mass,
            })
        })
        .collect();
    let model = ModalModel {
        name: format!("{} modes", set.name),
        dofs: union,
        modes: Vec::new(),
        residuals,
        complex_modes,
    };
    match model.validate() {
        Ok(()) => (Some(model), notes),
        Err(e) => {
            notes.push(format!("the scaled model is not valid: {}", e.message));
            (None, notes)
        }
    }
}

/// What [`regenerate`] made.
#[derive(Debug, Clone, PartialEq)]
pub struct Regenerated {
    pub set: FrfSet,
    /// Entries filled from the mode shapes ("OUT/IN").
    pub filled: Vec<String>,
    /// The same entries as (output, input) indices of the set.
    pub filled_at: Vec<(usize, usize)>,
}

/// The FRFs of an identification on `freqs` (inside the fitted band), in
/// the measured set's quantities, at its outputs and inputs. With the
/// scaled model, every entry comes from it; without one, the measured
/// entries come from their own residues. `fill_missing` fills the entries
/// that were not measured from the mode shapes (it needs the model); each
/// is listed in `filled` and in the set's warnings.
pub fn regenerate(id: &Identification, freqs: &[f64], fill_missing: bool) -> Result<Regenerated> {
    crate::grid::check_grid(freqs)?;
    let (lo, hi) = (id.band[0], id.band[1]);
    let (g0, g1) = (freqs[0], freqs[freqs.len() - 1]);
    let slack = 1e-9 * hi;
    if g0 < lo - slack || g1 > hi + slack {
        return Err(Error::grid(format!(
            "the grid {g0}–{g1} Hz reaches outside the fitted band {lo}–{hi} Hz; a model is valid only in the band it was fitted in"
        ))
        .field("grid"));
    }
    let (no, ni) = (id.outputs.len(), id.inputs.len());
    let missing: Vec<(usize, usize)> = (0..no)
        .flat_map(|o| (0..ni).map(move |i| (o, i)))
        .filter(|&(o, i)| !id.present[o * ni + i])
        .collect();
    if fill_missing {
        if missing.is_empty() {
            return Err(Error::recipe(format!(
                "fill_missing is true but '{}' misses no entry",
                id.set
            ))
            .field("fill_missing"));
        }
        if id.model.is_none() {
            return Err(Error::missing(format!(
                "fill_missing needs the scaled modal model, which '{}' has not: {}",
                id.set,
                id.model_notes.join("; ")
            ))
            .field("fill_missing"));
        }
    }
    let p_out = motion_order(id.out_qty)
        .ok_or_else(|| Error::quantity(format!("'{}' is not a motion-per-force set", id.set)))?;
    let mut set = FrfSet::zeros(
        &id.set,
        freqs.to_vec(),
        id.outputs.clone(),
        id.inputs.clone(),
        id.out_qty,
        id.in_qty,
    );
    let mut filled = Vec::new();
    let mut filled_at = Vec::new();
    match &id.model {
        Some(model) => {
            let rec = model.receptance(freqs)?;
            let u = &model.dofs;
            for o in 0..no {
                for i in 0..ni {
                    let keep = id.present[o * ni + i] || fill_missing;
                    if !keep {
                        continue;
                    }
                    let (Some(a), Some(b)) = (place(u, &id.outputs[o]), place(u, &id.inputs[i]))
                    else {
                        return Err(Error::internal("a DOF of the set is not in its model"));
                    };
                    let f = id.outputs[o].sign() * u[a].sign() * id.inputs[i].sign() * u[b].sign();
                    for k in 0..freqs.len() {
                        set.set(k, o, i, rec.get(k, a, b) * f);
                    }
                }
            }
            if fill_missing {
                for &(o, i) in &missing {
                    let recip = (0..no).any(|o2| {
                        (0..ni).any(|i2| {
                            id.present[o2 * ni + i2]
                                && id.outputs[o2].same_place(&id.inputs[i])
                                && id.inputs[i2].same_place(&id.outputs[o])
                        })
                    });
                    let label = format!("{}/{}", id.outputs[o], id.inputs[i]);
                    set.warnings.push(format!(
                        "entry {label} was not measured: synthesized from the identified mode shapes{}",
                        if recip {
                            ", with the residual terms of its measured reciprocal entry"
                        } else {
                            ", without residual terms (the effect of modes outside the band is not in it)"
                        }
                    ));
                    filled.push(label);
                    filled_at.push((o, i));
                }
            }
        }
        None => {
            for e in &id.entries {
                for (k, &f) in freqs.iter().enumerate() {
                    let v = residues::entry_value(
                        &id.modes.iter().map(|m| m.pole).collect::<Vec<_>>(),
                        &e.fit,
                        2.0 * PI * f,
                    );
                    set.set(k, e.output, e.input, v);
                }
            }
        }
    }
    // missing entries not filled stay missing
    for o in 0..no {
        for i in 0..ni {
            let keep = id.present[o * ni + i] || fill_missing;
            if !keep {
                set.present[o * ni + i] = false;
                for k in 0..freqs.len() {
                    set.set(k, o, i, Complex64::new(f64::NAN, f64::NAN));
                }
            }
        }
    }
    // receptance → the measured quantity
    if p_out != 0 {
        for (k, f) in freqs.iter().enumerate() {
            let g = Complex64::new(0.0, 2.0 * PI * f).powi(p_out);
            for v in set.line_mut(k) {
                *v *= g;
            }
        }
    }
    set.warnings.push(format!(
        "synthesized from {} mode(s) identified in {lo}–{hi} Hz, with residual terms",
        id.modes.len()
    ));
    Ok(Regenerated {
        set,
        filled,
        filled_at,
    })
}

/// The identified model as UFF dataset 55 (one dataset a mode), through
/// [`crate::io::uff58::write_55`]. Dataset 55 has no place for residual
/// terms: they are left out, and the returned note says so.
pub fn model_uff55(model: &ModalModel) -> Result<(String, Option<String>)> {
    let mut m = model.clone();
    let note = (!m.residuals.is_empty()).then(|| {
        format!(
            "dataset 55 has no place for residual terms: the {} residual term(s) of the model are only in its JSON",
            m.residuals.len()
        )
    });
    m.residuals.clear();
    Ok((crate::io::uff58::write_55(&m)?, note))
}
