//! Datasets into FRF sets: the readers [`read`], [`read_with`] and
//! [`read_declared`]. Each dataset 58 gets its role (FRF, coherence or a
//! spectrum kind), its DOFs and its values in SI, and joins a group by the
//! rules of "How datasets are grouped into sets" in the `uff58` docs: our own
//! set tag (several sets in one file), else function, quantity pair and grid
//! (one matrix exported as many datasets); coherence joins its FRF.
//!
//! Not here: one set spread over several files (a roving-hammer delivery),
//! joined by `io::merge`; unit factors (`convert.rs`); parsing (`scan.rs`).

use super::convert::{
    dir_of, frequencies, frf_meaning, spectrum_meaning, untold, LastGrid, SpectrumMeaning,
};
use super::extras::{extras_of, UffExtras};
use super::fill::{line_major, Column, Values};
use super::provenance::provenance_from_lines;
use super::records::{data_type_name, function_type_name, Dataset58, TimeHistory};
use super::scan::parse_file_with;
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet, Provenance, SignalKind};
use crate::limits::Limits;
use crate::units::Quantity;
use num_complex::Complex64;
use std::collections::{HashMap, HashSet};
use std::rc::Rc;

#[derive(Debug, Clone, Copy, PartialEq)]
enum Role {
    Frf,
    Coherence,
    Spectrum(SignalKind),
    /// Function type 0 until its labels decide.
    General,
}

/// Groups warnings that repeat over many datasets into one line each.
/// Kept in the order first seen; the index makes adding linear in the
/// number of remarks, however many distinct ones a file provokes.
#[derive(Default, Clone)]
pub(super) struct Remarks {
    items: Vec<(String, Vec<usize>)>,
    index: HashMap<String, usize>,
}

impl Remarks {
    pub(super) fn add(&mut self, msg: String, line: usize) {
        match self.index.get(&msg) {
            Some(&n) => self.items[n].1.push(line),
            None => {
                self.index.insert(msg.clone(), self.items.len());
                self.items.push((msg, vec![line]));
            }
        }
    }
    fn render(&self, file: &str) -> Vec<String> {
        self.items
            .iter()
            .map(|(m, lines)| {
                let shown: Vec<String> = lines.iter().take(5).map(|l| l.to_string()).collect();
                let more = if lines.len() > 5 {
                    format!(" and {} more", lines.len() - 5)
                } else {
                    String::new()
                };
                format!(
                    "{file}: dataset{} at line{} {}{more}: {m}",
                    if lines.len() > 1 { "s" } else { "" },
                    if lines.len() > 1 { "s" } else { "" },
                    shown.join(", ")
                )
            })
            .collect()
    }
}

struct Entry {
    out: Dof,
    inp: Dof,
    values: Values,
    line: usize,
    binary: bool,
    name: String,
    /// ID lines 3-5 (they may carry an earlier provenance chain).
    ids: [String; 3],
}

/// Our writer's set number and the set name (ID line 1), when ID line 2
/// carries `set=<n>`.
type SetTag = (u32, String);

struct Group {
    role: Role,
    out_qty: Quantity,
    in_qty: Quantity,
    freqs: Rc<[f64]>,
    tag: Option<SetTag>,
    entries: Vec<Entry>,
    remarks: Remarks,
    /// Run number when the file repeats DOF pairs (see [`split_runs`]).
    run: Option<usize>,
}

/// What our own writer puts in ID line 2 (see the module docs), when the
/// line is exactly that text; other text gives nothing.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
struct OwnId2 {
    /// `signal=<kind>`.
    signal: Option<SignalKind>,
    /// `set=<n>`, n ≥ 1.
    set: Option<u32>,
}

fn own_id2(line: &str) -> OwnId2 {
    let toks: Vec<&str> = line.split_whitespace().collect();
    let (first, rest) = match toks.split_first() {
        Some(x) => x,
        None => return OwnId2::default(),
    };
    let mut id = OwnId2::default();
    if let Some(text) = first.strip_prefix("signal=") {
        match text {
            // kinds fixed by their function types (3, 10), written by mortise
            "cross" => id.signal = Some(SignalKind::Cross),
            "esd" => id.signal = Some(SignalKind::Esd),
            _ => match crate::io::parse_signal(text) {
                Ok(k) if k.name() == text => id.signal = Some(k),
                _ => return OwnId2::default(),
            },
        }
    } else if *first != "coherence" && !is_kind_name(first) {
        return OwnId2::default();
    }
    match rest {
        [] => {}
        [t] => match t.strip_prefix("set=").and_then(|n| n.parse::<u32>().ok()) {
            Some(n) if n >= 1 => id.set = Some(n),
            _ => return OwnId2::default(),
        },
        _ => return OwnId2::default(),
    }
    id
}

/// An FRF kind name as [`crate::frf::FrfKind::name`] writes it.
fn is_kind_name(t: &str) -> bool {
    Quantity::ALL.iter().any(|a| {
        Quantity::ALL
            .iter()
            .any(|b| crate::frf::FrfKind::of(*a, *b).name() == t)
    })
}

/// The spectrum kind of a dataset of function type `func` (2, 9 or 12),
/// from the function type, our ID-line marker and the caller's declaration.
fn spectrum_kind(
    file: &str,
    ds: &Dataset58,
    marker: Option<SignalKind>,
    declared: Option<SignalKind>,
) -> Result<SignalKind> {
    let refuse = |what: String, have: SignalKind, d: SignalKind| {
        Error::usage(format!(
            "{what} makes this dataset {} {} spectrum, but the import options declare {}; declare {} or leave \"signal\" out",
            if have == SignalKind::Autopower { "an" } else { "a" },
            have.name(),
            d.name(),
            have.name()
        ))
        .field("record 6, function type")
        .at_line(ds.record_line(6))
        .in_file(file)
    };
    let fixed = match ds.func_type {
        2 => Some(SignalKind::Autopower),
        9 => Some(SignalKind::Psd),
        _ => None,
    };
    if let Some(have) = fixed {
        return match declared {
            Some(d) if d != have => Err(refuse(
                format!(
                    "function type {} ({})",
                    ds.func_type,
                    function_type_name(ds.func_type).unwrap_or("")
                ),
                have,
                d,
            )),
            _ => Ok(have),
        };
    }
    match (marker, declared) {
        (Some(m), Some(d)) if m != d => Err(refuse(
            format!("ID line 2 'signal={}' (written by mortise)", m.name()),
            m,
            d,
        )),
        (Some(m), _) => Ok(m),
        (None, Some(d)) => Ok(d),
        (None, None) => Ok(SignalKind::Peak),
    }
}

/// What a user tells the reader that the file does not: quantities of
/// datasets that name none (function type 0, or codes and labels left
/// blank) and DOFs of datasets written without node and direction numbers.
/// Each given value must be used by some dataset, else it is refused.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Overrides {
    /// Output (response) quantity of datasets whose records 9 do not tell it.
    pub out_qty: Option<Quantity>,
    /// Input (reference) quantity of datasets whose records 10 do not tell it.
    pub in_qty: Option<Quantity>,
    /// DOFs for datasets without DOF numbers (node 0, direction 0).
    pub dofs: Vec<DofAssignment>,
}

/// DOFs for one dataset written without DOF numbers: `dataset` is the
/// 1-based number of the dataset 58 in the file (None: the file's only
/// dataset without DOF numbers).
#[derive(Debug, Clone, PartialEq)]
pub struct DofAssignment {
    pub dataset: Option<usize>,
    pub out: Dof,
    pub inp: Dof,
}

/// Read every dataset 58/58b in a file and group them into FRF sets (one per
/// function type, quantity pair and grid); returns the sets and warnings.
/// DOFs get the component namespace `component`.
pub fn read(bytes: &[u8], file: &str, component: &str) -> Result<(Vec<FrfSet>, Vec<String>)> {
    read_with(bytes, file, Some(component))
}

/// Like [`read`]; with `component` None each DOF takes its component from
/// the entity name of record 6 (mortise writes the component there when it
/// fits the 10 columns), else from the file stem.
pub fn read_with(
    bytes: &[u8],
    file: &str,
    component: Option<&str>,
) -> Result<(Vec<FrfSet>, Vec<String>)> {
    read_declared(bytes, file, component, None)
}

/// Like [`read_with`], with the spectrum kind the caller declares for the
/// file's spectra (see "Spectrum kinds" in the module docs).
pub fn read_declared(
    bytes: &[u8],
    file: &str,
    component: Option<&str>,
    declared: Option<SignalKind>,
) -> Result<(Vec<FrfSet>, Vec<String>)> {
    read_declared_with_limits(bytes, file, component, declared, &Limits::default())
}

/// Like [`read_declared`], with each set's lines × outputs × inputs checked
/// against `limits` before it is allocated: datasets of distinct DOF pairs
/// on one grid make a matrix whose size grows with the square of their
/// number, so a small file can ask for gigabytes.
pub fn read_declared_with_limits(
    bytes: &[u8],
    file: &str,
    component: Option<&str>,
    declared: Option<SignalKind>,
    limits: &Limits,
) -> Result<(Vec<FrfSet>, Vec<String>)> {
    let r = read_overridden(
        bytes,
        file,
        component,
        declared,
        &Overrides::default(),
        limits,
    )?;
    if r.sets.is_empty() {
        return Err(time_only(file, &r.time));
    }
    let mut warnings = r.warnings;
    if !r.time.is_empty() {
        warnings.push(format!(
            "{file}: {}; skipped by this reader",
            time_text(&r.time)
        ));
    }
    Ok((r.sets, warnings))
}

/// What [`read_overridden`] gives: FRF and spectrum sets, time histories
/// (function type 1) apart, and warnings.
#[derive(Debug, Clone, Default)]
pub struct UffRead {
    pub sets: Vec<FrfSet>,
    pub time: Vec<TimeHistory>,
    pub warnings: Vec<String>,
}

fn time_text(time: &[TimeHistory]) -> String {
    let lines: Vec<String> = time.iter().take(5).map(|t| t.line.to_string()).collect();
    format!(
        "{} dataset(s) of function type 1 (time response) at line(s) {}{}: time histories are not FRFs or spectra (their abscissa is time, not frequency); spectra and FRFs are made from them by 'mortise spectrum' and 'mortise estimate' (recipe steps 'spectrum' and 'estimate-frf')",
        time.len(),
        lines.join(", "),
        if time.len() > 5 { " ..." } else { "" }
    )
}

fn time_only(file: &str, time: &[TimeHistory]) -> Error {
    Error::unsupported(time_text(time))
        .field("record 6, function type")
        .at_line(time.first().map_or(1, |t| t.line + 7))
        .in_file(file)
}

/// A dataset of function type 1 as a [`TimeHistory`] in SI.
fn time_history(
    file: &str,
    ds: &Dataset58,
    y: &[Complex64],
    channel: Option<Dof>,
    rm: &mut Remarks,
) -> Result<TimeHistory> {
    let ax = &ds.axes[0];
    if !matches!(ax.code, 17 | 0 | 1) {
        return Err(Error::unsupported(format!(
            "abscissa specific data type {} ({}) for a time response; expected 17 (time)",
            ax.code,
            data_type_name(ax.code)
        ))
        .field("record 8, specific data type")
        .at_line(ds.record_line(8))
        .in_file(file));
    }
    let tf = if ax.units.is_empty() {
        1.0
    } else {
        let u = crate::units::parse_unit(&ax.units).map_err(|e| {
            e.field("record 8, axis units label")
                .at_line(ds.record_line(8))
                .in_file(file)
        })?;
        if u.dim != crate::units::Dim::new(0, 0, 1, 0) {
            return Err(Error::unit(format!(
                "abscissa units label '{}' of a time response is not a time unit; expected s",
                crate::error::quote(&ax.units)
            ))
            .field("record 8, axis units label")
            .at_line(ds.record_line(8))
            .in_file(file));
        }
        u.factor
    };
    let rot = channel.as_ref().is_some_and(|d| d.dir.is_rotational());
    let (quantity, factor) = match spectrum_meaning(file, ds, Some(SignalKind::Peak), rot, rm)? {
        Some(m) => (Some(m.qty), m.factor),
        None => {
            rm.add(
                "time response without a quantity in record 9: values kept as in the file"
                    .to_string(),
                ds.line,
            );
            (None, 1.0)
        }
    };
    let times: Vec<f64> = ds.x.iter().map(|t| t * tf).collect();
    let duration_s = match (times.first(), times.last()) {
        (Some(a), Some(b)) => b - a,
        _ => 0.0,
    };
    Ok(TimeHistory {
        name: ds.id[0].trim().to_string(),
        channel,
        quantity,
        unit: quantity.map_or(String::new(), |q| q.si_unit(rot).to_string()),
        start_s: times.first().copied().unwrap_or(0.0),
        sample_rate_hz: (ds.even && ds.x_inc > 0.0).then(|| 1.0 / (ds.x_inc * tf)),
        duration_s,
        values: y.iter().map(|v| v.re * factor).collect(),
        times,
        line: ds.line,
    })
}

/// Values times a factor, in place (the products `v * factor` of a copy).
fn scaled(mut y: Vec<Complex64>, factor: f64) -> Vec<Complex64> {
    if factor != 1.0 {
        y.iter_mut().for_each(|v| *v *= factor);
    }
    y
}

/// The DOFs a dataset without DOF numbers gets until the user assigns them:
/// distinct places (never a driving point), named by the dataset's number.
pub fn unnumbered_dofs(component: &str, n: usize) -> (Dof, Dof) {
    (
        Dof::scalar(component, &format!("nodof_out_{n}")),
        Dof::scalar(component, &format!("nodof_in_{n}")),
    )
}

/// Like [`read_declared_with_limits`], with what the user tells the reader
/// that the file does not ([`Overrides`]).
pub fn read_overridden(
    bytes: &[u8],
    file: &str,
    component: Option<&str>,
    declared: Option<SignalKind>,
    ov: &Overrides,
    limits: &Limits,
) -> Result<UffRead> {
    read_leaving(bytes, file, component, declared, ov, limits, true)
}

/// [`read_overridden`], with even 58b values left in the file until the
/// sets are built (`leave`, as every reader does) or copied first (the
/// tests' reference: the same sets either way).
fn read_leaving(
    bytes: &[u8],
    file: &str,
    component: Option<&str>,
    declared: Option<SignalKind>,
    ov: &Overrides,
    limits: &Limits,
    leave: bool,
) -> Result<UffRead> {
    with_file_hash(bytes, None, &mut |sha256| {
        let p = parse_file_with(bytes, file, &mut |_| {}, leave)?;
        group_datasets(
            bytes, file, component, declared, ov, limits, p.datasets, p.remarks, sha256,
        )
    })
}

/// What a whole UFF file gives in one pass ([`read_all`]).
#[derive(Debug, Clone, Default)]
pub struct UffAll {
    /// Header, units, geometry, modal model (as [`super::read_extras`]).
    pub extras: Option<UffExtras>,
    /// The parse's remarks with the geometry's and modal model's notes (as
    /// [`super::read_extras`]).
    pub notes: Vec<String>,
    /// The sets (as [`read_overridden`]), when the file holds datasets 58
    /// or nothing else mortise reads (then the error of a file without
    /// them); `None` for a file of extras alone.
    pub read: Option<UffRead>,
    /// SHA-256 of the file (hex), as in the sets' provenance.
    pub sha256: String,
}

/// [`super::read_extras`] and [`read_overridden`] from one parse of the
/// file (the same results and errors, in that order), telling `progress`
/// the bytes read so far (see [`super::PROGRESS_STEP`]). `extras_component`
/// names the modal model when the file's header does not. `sha256`: the
/// bytes' SHA-256 when the caller already computed it, else computed here.
#[allow(clippy::too_many_arguments)]
pub fn read_all(
    bytes: &[u8],
    sha256: Option<&str>,
    file: &str,
    extras_component: &str,
    component: Option<&str>,
    declared: Option<SignalKind>,
    ov: &Overrides,
    limits: &Limits,
    progress: &mut dyn FnMut(usize),
) -> Result<UffAll> {
    with_file_hash(bytes, sha256, &mut |sha256| {
        let mut p = parse_file_with(bytes, file, progress, true)?;
        let datasets = std::mem::take(&mut p.datasets);
        let remarks = p.remarks.clone();
        let (extras, notes) = extras_of(p, file, extras_component)?;
        let read = if !datasets.is_empty() || extras.is_none() {
            Some(group_datasets(
                bytes, file, component, declared, ov, limits, datasets, remarks, sha256,
            )?)
        } else {
            None
        };
        Ok(UffAll {
            extras,
            notes,
            read,
            sha256: sha256(),
        })
    })
}

/// Files from this size on are hashed on a second thread while they are
/// parsed and grouped (natively; the page's WebAssembly has one thread).
#[cfg(not(target_arch = "wasm32"))]
const HASH_APART: usize = 1 << 20;

/// `body` run with a function that gives the file's SHA-256 (hex): `known`
/// where given. Else, for a large file natively, the hash is computed on a
/// second thread from the start, beside the parse and the grouping, and
/// the function waits for it (the sets' provenance asks for it last);
/// otherwise the hash is computed when first asked. The value is the same
/// every way.
fn with_file_hash<R>(
    bytes: &[u8],
    known: Option<&str>,
    body: &mut dyn FnMut(&mut dyn FnMut() -> String) -> R,
) -> R {
    if let Some(k) = known {
        return body(&mut || k.to_string());
    }
    let mut done: Option<String> = None;
    #[cfg(not(target_arch = "wasm32"))]
    if bytes.len() >= HASH_APART {
        return std::thread::scope(|sc| {
            let mut thread = Some(sc.spawn(|| crate::io::sha256_hex(bytes)));
            body(&mut || {
                done.get_or_insert_with(|| {
                    // a hash thread that failed to finish (it cannot panic
                    // on bytes) is hashed again here
                    thread
                        .take()
                        .and_then(|h| h.join().ok())
                        .unwrap_or_else(|| crate::io::sha256_hex(bytes))
                })
                .clone()
            })
        });
    }
    body(&mut || {
        done.get_or_insert_with(|| crate::io::sha256_hex(bytes))
            .clone()
    })
}

/// The datasets of a parsed file into sets (the body of [`read_overridden`];
/// `warnings`: the parse's remarks). Each dataset is dropped once read into
/// its group, so the file's values are not held twice.
#[allow(clippy::too_many_arguments)]
fn group_datasets(
    bytes: &[u8],
    file: &str,
    component: Option<&str>,
    declared: Option<SignalKind>,
    ov: &Overrides,
    limits: &Limits,
    datasets: Vec<Dataset58>,
    mut warnings: Vec<String>,
    sha256: &mut dyn FnMut() -> String,
) -> Result<UffRead> {
    let stem = crate::io::file_stem(file);
    let comp_of = |entity: &str| -> String {
        match component {
            Some(c) => c.to_string(),
            None if !entity.is_empty() => entity.to_string(),
            None => stem.clone(),
        }
    };
    if datasets.is_empty() {
        return Err(Error::parse(format!(
            "the file holds no dataset 58 (functions at nodal DOFs), so no FRF or spectrum to read; it holds {}",
            census_text(bytes)
        ))
        .field("dataset number")
        .in_file(file));
    }
    let mut groups = Groups::default();
    // (response, reference, grid, values, line, set tag)
    type Coh = (Dof, Dof, Rc<[f64]>, Vec<f64>, usize, Option<SetTag>);
    let mut coherences: Vec<Coh> = Vec::new();
    let mut file_rm = Remarks::default();
    let mut used_out_qty = false;
    let mut used_in_qty = false;
    let mut used_dofs = vec![false; ov.dofs.len()];
    let mut time: Vec<TimeHistory> = Vec::new();
    let mut time_errors: Vec<Error> = Vec::new();
    let n_unnumbered = datasets.iter().filter(|d| unnumbered(d)).count();
    // start lines, for messages after the loop (the datasets are consumed)
    let ds_lines: Vec<usize> = datasets.iter().map(|d| d.line).collect();
    let mut last_grid = LastGrid::default();
    for (ds_index, mut owned) in datasets.into_iter().enumerate() {
        // an FRF's values left in the file stay there until the set is
        // built (payload.rs); any other dataset's are copied now
        if !matches!(owned.func_type, 4 | 5) {
            owned.fill_from(bytes);
        }
        // the values leave the dataset (scaled in place below, not copied)
        let y = std::mem::take(&mut owned.y);
        let ds = &owned;
        let ds_no = ds_index + 1;
        if header_not_utf8(ds) {
            file_rm.add(
                "header text (ID lines, labels, units) is not UTF-8; read as Latin-1 (Windows-1252), so a byte 0xB2 is '²' and 0xB5 'µ'".to_string(),
                ds.line,
            );
        }
        let own = own_id2(&ds.id[1]);
        let tag = own.set.map(|n| (n, ds.id[0].trim().to_string()));
        let role = match ds.func_type {
            4 | 5 => Role::Frf,
            6 => Role::Coherence,
            2 | 9 | 12 => Role::Spectrum(spectrum_kind(file, ds, own.signal, declared)?),
            3 | 10 => {
                let k = if ds.func_type == 3 {
                    SignalKind::Cross
                } else {
                    SignalKind::Esd
                };
                if let Some(d) = declared.filter(|d| *d != k) {
                    return Err(Error::usage(format!(
                        "function type {} ({}) makes this dataset {}, but the import options declare {}; leave \"signal\" out",
                        ds.func_type,
                        function_type_name(ds.func_type).unwrap_or(""),
                        k.describe(),
                        d.name()
                    ))
                    .field("record 6, function type")
                    .at_line(ds.record_line(6))
                    .in_file(file));
                }
                Role::Spectrum(k)
            }
            0 => Role::General,
            1 => {
                let channel = (!(ds.rsp_node == 0 && ds.rsp_dir == 0)).then(|| {
                    let (d, pos) = dir_of(ds.rsp_dir);
                    let mut c = Dof::new(&comp_of(&ds.rsp_entity), &ds.rsp_node.to_string(), d);
                    c.positive = pos;
                    c
                });
                let mut rm = Remarks::default();
                match time_history(file, ds, &y, channel, &mut rm) {
                    Ok(t) => time.push(t),
                    // a contradictory time dataset does not block the
                    // file's other data; alone, it is the file's error
                    Err(e) => {
                        file_rm.add(format!("time response skipped: {}", e.message), ds.line);
                        time_errors.push(e);
                        continue;
                    }
                }
                for (m, lines) in rm.items {
                    for l in lines {
                        file_rm.add(m.clone(), l);
                    }
                }
                continue;
            }
            t => {
                file_rm.add(
                    format!(
                        "function type {t} ({}) skipped: mortise reads 4 (FRF), 5 (transmissibility), 6 (coherence), 2 (auto spectrum), 3 (cross spectrum), 9 (PSD), 10 (ESD), 12 (spectrum) and 0 (general, when its labels tell the quantities)",
                        function_type_name(t).unwrap_or("not defined by the layout")
                    ),
                    ds.line,
                );
                continue;
            }
        };
        let mut rm = Remarks::default();
        let freqs = frequencies(file, ds, &mut rm, &mut last_grid)?;
        let (od, opos) = dir_of(ds.rsp_dir);
        let mut out = Dof::new(&comp_of(&ds.rsp_entity), &ds.rsp_node.to_string(), od);
        out.positive = opos;
        let (id_, ipos) = dir_of(ds.ref_dir);
        let mut inp = Dof::new(&comp_of(&ds.ref_entity), &ds.ref_node.to_string(), id_);
        inp.positive = ipos;
        if unnumbered(ds) {
            let given = ov.dofs.iter().enumerate().find(|(_, a)| match a.dataset {
                Some(n) => n == ds_no,
                None => n_unnumbered == 1,
            });
            match given {
                Some((k, a)) => {
                    used_dofs[k] = true;
                    out = a.out.clone();
                    inp = a.inp.clone();
                    rm.add(
                        format!(
                            "the file carries no DOF numbers (node 0, direction 0); DOFs {} / {} assigned by the import options",
                            crate::error::quote(&out.to_string()),
                            crate::error::quote(&inp.to_string())
                        ),
                        ds.line,
                    );
                }
                None => {
                    let (o, i) = unnumbered_dofs(&comp_of(&ds.rsp_entity), ds_no);
                    rm.add(
                        format!(
                            "the file carries no DOF numbers (node 0, direction 0 for response and reference): dataset {ds_no} is read at the placeholders {} / {}, which are not a driving point (the audit runs no reciprocity or passivity on them); assign DOFs with the import option \"dofs\" (CLI --uff-dofs DATASET:OUT,IN)",
                            crate::error::quote(&o.to_string()),
                            crate::error::quote(&i.to_string())
                        ),
                        ds.line,
                    );
                    out = o;
                    inp = i;
                }
            }
        }
        let orot = out.dir.is_rotational();
        let irot = inp.dir.is_rotational();
        let name = ds.id[0].trim().to_string();
        let ids = [ds.id[2].clone(), ds.id[3].clone(), ds.id[4].clone()];
        let entry = |out: Dof, inp: Dof, values: Values| Entry {
            out,
            inp,
            values,
            line: ds.line,
            binary: ds.binary,
            name: name.clone(),
            ids: ids.clone(),
        };
        // a general function is an FRF when record 10 or a ratio label
        // says so, else a spectrum when record 9 says what it is
        let role = if role == Role::General {
            let m = frf_meaning(file, ds, orot, irot, &mut Remarks::default());
            let ratio = matches!(&m, Ok(m) if m.inp.is_some());
            if ratio {
                Role::Frf
            } else {
                match spectrum_meaning(file, ds, None, orot, &mut Remarks::default()) {
                    Ok(Some(sm)) => Role::Spectrum(sm.kind),
                    _ if ov.out_qty.is_some() && ov.in_qty.is_some() => Role::Frf,
                    _ if ov.out_qty.is_some() => Role::Spectrum(declared.unwrap_or(SignalKind::Peak)),
                    _ => {
                        return Err(untold(
                            file,
                            ds,
                            "neither the specific data types nor the units labels say what the values are (an FRF: a ratio such as (m/s^2)/N; a spectrum: a unit such as Pa, Pa^2 or Pa^2/Hz)",
                        ))
                    }
                }
            }
        } else {
            role
        };
        if ds.func_type == 0 {
            rm.add(
                format!(
                    "function type 0 (general or unknown) read as {}, as the specific data types and units labels say",
                    match role {
                        Role::Spectrum(k) => k.describe(),
                        _ => "an FRF",
                    }
                ),
                ds.line,
            );
        }
        match role {
            Role::General => unreachable_general(file, ds)?,
            Role::Coherence => {
                let v: Vec<f64> = y.iter().map(|c| c.re).collect();
                coherences.push((out, inp, freqs, v, ds.line, tag));
                continue;
            }
            Role::Frf => {
                let m = frf_meaning(file, ds, orot, irot, &mut rm)?;
                let transmissibility = ds.func_type == 5;
                let (mut oq, mut iq) = (m.out, m.inp);
                if transmissibility {
                    // output and input of the same quantity
                    oq = oq.or(iq);
                    iq = iq.or(oq);
                }
                if oq.is_none() {
                    if let Some(q) = ov.out_qty {
                        used_out_qty = true;
                        oq = Some(q);
                    }
                }
                if iq.is_none() {
                    if let Some(q) = ov.in_qty {
                        used_in_qty = true;
                        iq = Some(q);
                    }
                }
                let (oq, iq) = match (oq, iq) {
                    (Some(o), Some(i)) => (o, i),
                    (None, None) if transmissibility => {
                        rm.add(
                            "transmissibility without quantities in records 9 and 10: read as a dimensionless ratio (kind conversions are refused on it)".to_string(),
                            ds.line,
                        );
                        (Quantity::Dimensionless, Quantity::Dimensionless)
                    }
                    (o, _) => {
                        return Err(untold(
                            file,
                            ds,
                            if o.is_none() {
                                "the response quantity (record 9) is not told"
                            } else {
                                "the reference quantity (record 10) is not told"
                            },
                        ))
                    }
                };
                if transmissibility && oq != iq {
                    return Err(Error::quantity(format!(
                        "function type 5 (transmissibility) relates like quantities, but record 9 says {oq} and record 10 says {iq}; expected the same quantity on both sides (or function type 4 for an FRF)"
                    ))
                    .field("records 9 and 10, specific data type")
                    .at_line(ds.record_line(9))
                    .in_file(file));
                }
                let values = match ds.payload {
                    Some(p) => Values::InFile(p, m.factor),
                    None => Values::Held(scaled(y, m.factor)),
                };
                push_entry(
                    &mut groups,
                    (role, oq, iq, freqs, tag),
                    entry(out, inp, values),
                    rm,
                );
            }
            Role::Spectrum(kind) => {
                let general = ds.func_type == 0;
                let sm = spectrum_meaning(file, ds, (!general).then_some(kind), orot, &mut rm)?;
                let sm = match sm {
                    Some(sm) => sm,
                    None => match ov.out_qty {
                        Some(q) => {
                            used_out_qty = true;
                            let f = if ds.axes[1].units.is_empty() {
                                1.0
                            } else {
                                spectrum_meaning(
                                    file,
                                    ds,
                                    Some(kind),
                                    orot,
                                    &mut Remarks::default(),
                                )?
                                .map(|m| m.factor)
                                .unwrap_or(1.0)
                            };
                            SpectrumMeaning {
                                kind,
                                qty: q,
                                ref_qty: (kind == SignalKind::Cross).then_some(q),
                                factor: f,
                                square: false,
                            }
                        }
                        None => {
                            return Err(untold(
                                file,
                                ds,
                                "the quantity of the spectrum (record 9) is not told",
                            ))
                        }
                    },
                };
                if sm.kind == SignalKind::Peak
                    && matches!(ds.func_type, 12 | 0)
                    && own.signal.is_none()
                    && declared.is_none()
                {
                    rm.add(
                        "UFF does not say whether spectrum amplitudes are peak or RMS; read as peak"
                            .to_string(),
                        ds.line,
                    );
                }
                let values: Vec<Complex64> = if sm.square {
                    y.iter()
                        .map(|v| Complex64::new(v.norm_sqr() * sm.factor, 0.0))
                        .collect()
                } else {
                    scaled(y, sm.factor)
                };
                let (reference, in_qty) = match sm.kind {
                    SignalKind::Cross => (inp, sm.ref_qty.unwrap_or(sm.qty)),
                    _ => (Dof::scalar("", "ref"), Quantity::Dimensionless),
                };
                push_entry(
                    &mut groups,
                    (Role::Spectrum(sm.kind), sm.qty, in_qty, freqs, tag),
                    entry(out, reference, Values::Held(values)),
                    rm,
                );
            }
        }
    }
    let refuse_unused = |given: bool, used: bool, key: &str, what: &str| -> Result<()> {
        if given && !used {
            return Err(Error::usage(format!(
                "the import option \"{key}\" was given, but every dataset of the file tells its {what}; leave \"{key}\" out"
            ))
            .field(key.to_string())
            .in_file(file));
        }
        Ok(())
    };
    refuse_unused(
        ov.out_qty.is_some(),
        used_out_qty,
        "out_qty",
        "response quantity",
    )?;
    refuse_unused(
        ov.in_qty.is_some(),
        used_in_qty,
        "in_qty",
        "reference quantity",
    )?;
    if let Some(k) = used_dofs.iter().position(|u| !u) {
        let a = &ov.dofs[k];
        return Err(Error::usage(match a.dataset {
            Some(n) => format!(
                "the import option \"dofs\" assigns DOFs to dataset {n}, but {}; assign DOFs only to datasets written without DOF numbers (node 0, direction 0)",
                match n.checked_sub(1).and_then(|k| ds_lines.get(k)) {
                    None => format!("the file holds {} dataset(s) 58", ds_lines.len()),
                    Some(line) => format!("dataset {n} (line {line}) carries DOF numbers"),
                }
            ),
            None => format!(
                "the import option \"dofs\" gives one DOF pair without a dataset number, but the file holds {n_unnumbered} dataset(s) without DOF numbers; {}",
                if n_unnumbered == 0 { "leave \"dofs\" out".to_string() } else { "give \"dataset\" for each".to_string() }
            ),
        })
        .field("dofs")
        .in_file(file));
    }
    split_runs(&mut groups);
    let prov_base = Provenance {
        file: crate::io::base_name(file),
        // asked for once the set is built (the hash may still be running)
        sha256: String::new(),
        format: String::new(),
        options: match component {
            Some(c) => format!("component={c}"),
            None => "component from entity names or file stem".to_string(),
        },
    };
    let default_name = match component {
        Some(c) if !c.is_empty() => c.to_string(),
        _ => stem.clone(),
    };
    let mut sets: Vec<FrfSet> = Vec::new();
    // places of each set's DOFs, for the coherence below
    let mut places: Vec<(DofIndex, DofIndex)> = Vec::new();
    let mut names = UniqueNames::default();
    // per set: every present value checked finite as it was placed
    let mut values_finite: Vec<bool> = Vec::new();
    for g in groups.list.iter_mut() {
        let (mut s, outs, ins, finite) = build_set(bytes, file, g, &default_name, limits)?;
        values_finite.push(finite);
        places.push((outs, ins));
        let mut p = prov_base.clone();
        p.sha256 = sha256();
        p.format = if g.entries.iter().any(|e| e.binary) {
            "uff58-binary"
        } else {
            "uff58-ascii"
        }
        .to_string();
        let lines: Vec<&str> = g
            .entries
            .iter()
            .flat_map(|e| e.ids.iter().map(|t| t.as_str()))
            .collect();
        // each record once, found by hash (a group may carry thousands)
        let mut seen = HashSet::new();
        for q in provenance_from_lines(&lines) {
            let key = (
                q.file.clone(),
                q.sha256.clone(),
                q.format.clone(),
                q.options.clone(),
            );
            if seen.insert(key) {
                s.provenance.push(q);
            }
        }
        s.provenance.push(p);
        let label = match g.role {
            Role::Spectrum(_) | Role::General => "spectrum",
            _ => s.kind().name(),
        };
        s.name = names.unique(std::mem::take(&mut s.name), label);
        sets.push(s);
    }
    // coherence onto the matching FRF entries: only the groups of the same
    // grid and tag are candidates (found by hash), DOFs by their places
    let mut by_grid: HashMap<(GridKey, Option<SetTag>), Vec<usize>> = HashMap::new();
    for (n, g) in groups.list.iter().enumerate() {
        if g.role == Role::Frf {
            by_grid
                .entry((GridKey(g.freqs.clone()), g.tag.clone()))
                .or_default()
                .push(n);
        }
    }
    for (out, inp, freqs, v, line, tag) in coherences {
        let mut done = false;
        let candidates = by_grid
            .get(&(GridKey(freqs), tag))
            .map(Vec::as_slice)
            .unwrap_or(&[]);
        for &n in candidates {
            let s = &mut sets[n];
            let i = places[n].0.get(&place(&out)).copied();
            let j = places[n].1.get(&place(&inp)).copied();
            if let (Some(i), Some(j)) = (i, j) {
                // a later run's coherence goes to the later run's set
                let filled = s
                    .coherence
                    .as_ref()
                    .is_some_and(|c| c[i * s.n_in() + j].is_finite());
                if filled {
                    continue;
                }
                let n = s.data.len();
                let (n_out, n_in) = (s.n_out(), s.n_in());
                let coh = s.coherence.get_or_insert_with(|| vec![f64::NAN; n]);
                for (k, c) in v.iter().enumerate() {
                    coh[(k * n_out + i) * n_in + j] = *c;
                }
                done = true;
                break;
            }
        }
        if !done {
            file_rm.add(
                format!(
                    "coherence {} / {} has no FRF with the same DOFs and grid; skipped",
                    crate::error::quote(&out.to_string()),
                    crate::error::quote(&inp.to_string())
                ),
                line,
            );
        }
    }
    for (s, &finite) in sets.iter().zip(&values_finite) {
        // the values were checked as they were placed (fill.rs); when one
        // is not finite, the whole check names it
        if finite {
            s.validate_layout()
        } else {
            s.validate()
        }
        .map_err(|e| e.in_file(file))?;
        warnings.extend(s.warnings.iter().cloned());
    }
    warnings.extend(file_rm.render(file));
    if sets.is_empty() && time.is_empty() {
        if let Some(e) = time_errors.into_iter().next() {
            return Err(e);
        }
    }
    if sets.is_empty() && !time.is_empty() {
        return Ok(UffRead {
            sets,
            time,
            warnings,
        });
    }
    if sets.is_empty() {
        return Err(Error::unsupported(format!(
            "the file holds {} dataset(s) 58 but none mortise reads (FRF, transmissibility, coherence with its FRF, spectra)",
            ds_lines.len()
        ))
        .field("record 6, function type")
        .in_file(file));
    }
    Ok(UffRead {
        sets,
        time,
        warnings,
    })
}

type GroupKey = (Role, Quantity, Quantity, Rc<[f64]>, Option<SetTag>);

/// True when a dataset carries no DOF numbers: node 0 and direction 0 for
/// both response and reference.
fn unnumbered(ds: &Dataset58) -> bool {
    ds.rsp_node == 0 && ds.rsp_dir == 0 && ds.ref_node == 0 && ds.ref_dir == 0
}

fn header_not_utf8(ds: &Dataset58) -> bool {
    ds.latin1
}

fn unreachable_general(file: &str, ds: &Dataset58) -> Result<()> {
    Err(Error::internal("a general function left undecided")
        .at_line(ds.line)
        .in_file(file))
}

/// Datasets that repeat a DOF pair of their group (several runs of one
/// channel) are kept: the k-th dataset of a pair goes to run k, each run
/// its own set named `<name> run <k>`, in the file's order. Nothing is
/// dropped; the recipe's `set` index picks a run.
fn split_runs(groups: &mut Groups) {
    let mut out = Vec::with_capacity(groups.list.len());
    for mut g in std::mem::take(&mut groups.list) {
        let mut count: HashMap<(Place, Place), usize> = HashMap::new();
        let mut runs: Vec<Vec<Entry>> = Vec::new();
        for e in g.entries.drain(..) {
            let c = count.entry((place(&e.out), place(&e.inp))).or_insert(0);
            if runs.len() <= *c {
                runs.push(Vec::new());
            }
            runs[*c].push(e);
            *c += 1;
        }
        let n = runs.len();
        if n == 1 {
            g.entries = runs.pop().unwrap_or_default();
            out.push(g);
            continue;
        }
        for (r, entries) in runs.into_iter().enumerate() {
            let mut remarks = g.remarks.clone();
            let lines: Vec<String> = entries.iter().take(5).map(|e| e.line.to_string()).collect();
            remarks.add(
                format!(
                    "the file repeats DOF pairs (several runs of one channel): kept as {n} sets, one per run in file order; this is run {} (datasets at lines {}{}); pick a run with the recipe component's \"set\" index",
                    r + 1,
                    lines.join(", "),
                    if entries.len() > 5 { " ..." } else { "" }
                ),
                entries[0].line,
            );
            out.push(Group {
                role: g.role,
                out_qty: g.out_qty,
                in_qty: g.in_qty,
                freqs: g.freqs.clone(),
                tag: g.tag.clone(),
                entries,
                remarks,
                run: Some(r + 1),
            });
        }
    }
    groups.list = out;
    groups.index.clear();
}

/// What a UFF file holds, dataset numbers with counts in order of first
/// appearance, for the message of a file without dataset 58.
fn census_text(bytes: &[u8]) -> String {
    use super::text::Cursor;
    let mut c = Cursor::new(bytes);
    let mut counts: Vec<(String, usize)> = Vec::new();
    let mut inside = false;
    let mut expect_number = false;
    while let Some(l) = c.next_line() {
        let t = l.trimmed();
        if expect_number {
            expect_number = false;
            let num = t.split_whitespace().next().unwrap_or("").to_string();
            if num == "-1" {
                expect_number = true;
                continue;
            }
            match counts.iter_mut().find(|(n, _)| *n == num) {
                Some(x) => x.1 += 1,
                None => counts.push((num, 1)),
            }
            inside = true;
            continue;
        }
        if t == "-1" {
            if inside {
                inside = false;
            } else {
                expect_number = true;
            }
        }
    }
    if counts.is_empty() {
        return "no dataset".to_string();
    }
    let list: Vec<String> = counts
        .iter()
        .take(20)
        .map(|(n, k)| {
            let what = match n.trim_end_matches(['b', 'B']) {
                "15" | "781" | "2411" => " (nodes)",
                "18" | "2420" => " (coordinate systems)",
                "55" => " (data at nodes: modes)",
                "82" => " (trace lines)",
                "151" => " (header)",
                "164" => " (units)",
                "2412" => " (elements)",
                "2414" => " (analysis data)",
                _ => "",
            };
            format!("dataset {}{what} ×{k}", crate::error::quote(n))
        })
        .collect();
    format!(
        "{}{}; the FRF reader reads dataset 58 and 58b only and skips the others",
        list.join(", "),
        if counts.len() > 20 { ", ..." } else { "" }
    )
}

/// A grid as a hash key: two grids are equal when every line's bits are
/// (values are finite, checked by the parser; -0 is 0 as `==` says), at
/// once when they are the one grid the datasets of a run share
/// ([`frequencies`]); hashed by its length and its first and last lines
/// only (equal grids hash alike; grids that differ only inside are told
/// apart by the comparison), so a file of many long datasets is not hashed
/// value by value.
#[derive(Debug, Clone)]
struct GridKey(Rc<[f64]>);

/// A line's bits, -0 as 0.
fn line_bits(f: &f64) -> u64 {
    (f + 0.0).to_bits()
}

impl PartialEq for GridKey {
    fn eq(&self, o: &Self) -> bool {
        Rc::ptr_eq(&self.0, &o.0)
            || (self.0.len() == o.0.len()
                && self
                    .0
                    .iter()
                    .zip(o.0.iter())
                    .all(|(a, b)| line_bits(a) == line_bits(b)))
    }
}

impl Eq for GridKey {}

impl std::hash::Hash for GridKey {
    fn hash<H: std::hash::Hasher>(&self, h: &mut H) {
        let v = &self.0;
        v.len().hash(h);
        for f in v[..v.len().min(4)]
            .iter()
            .chain(&v[v.len().saturating_sub(4)..])
        {
            line_bits(f).hash(h);
        }
    }
}

/// The groups in order of first appearance, found by hash: grouping is
/// linear in the number of datasets however many groups they form.
#[derive(Default)]
struct Groups {
    list: Vec<Group>,
    index: HashMap<HashKey, usize>,
}

/// A [`GroupKey`] as hashable values: role, quantities, grid bits, tag.
type HashKey = (
    u8,
    &'static str,
    Quantity,
    Quantity,
    GridKey,
    Option<SetTag>,
);

fn role_key(r: Role) -> (u8, &'static str) {
    match r {
        Role::Frf => (0, ""),
        Role::Coherence => (1, ""),
        Role::Spectrum(k) => (2, k.name()),
        Role::General => (3, ""),
    }
}

fn push_entry(groups: &mut Groups, key: GroupKey, e: Entry, rm: Remarks) {
    let (role, oq, iq, freqs, tag) = key;
    let (rk, rs) = role_key(role);
    let hk = (rk, rs, oq, iq, GridKey(freqs.clone()), tag.clone());
    let n = match groups.index.get(&hk) {
        Some(&n) => n,
        None => {
            groups.list.push(Group {
                role,
                out_qty: oq,
                in_qty: iq,
                freqs,
                tag,
                entries: Vec::new(),
                remarks: Remarks::default(),
                run: None,
            });
            groups.index.insert(hk, groups.list.len() - 1);
            groups.list.len() - 1
        }
    };
    let g = &mut groups.list[n];
    for (m, lines) in rm.items {
        for l in lines {
            g.remarks.add(m.clone(), l);
        }
    }
    g.entries.push(e);
}

/// Where a DOF is, whatever its sign: what [`Dof::same_place`] compares.
type Place = (String, String, crate::frf::Direction);
type DofIndex = HashMap<Place, usize>;

fn place(d: &Dof) -> Place {
    (d.component.clone(), d.node.clone(), d.dir)
}

/// Set names made unique in order: a name already taken gets the set's kind
/// (`casing (accelerance)`), then a number (`casing (accelerance) 2`, 3,
/// ...). A counter per base name keeps this linear in the number of sets.
#[derive(Default)]
struct UniqueNames {
    used: HashSet<String>,
    next: HashMap<String, usize>,
}

impl UniqueNames {
    fn unique(&mut self, name: String, label: &str) -> String {
        if self.used.insert(name.clone()) {
            return name;
        }
        let base = format!("{name} ({label})");
        if self.used.insert(base.clone()) {
            return base;
        }
        let n = self.next.entry(base.clone()).or_insert(2);
        loop {
            let cand = format!("{base} {n}");
            *n += 1;
            if self.used.insert(cand.clone()) {
                return cand;
            }
        }
    }
}

/// The set of a group, with the places of its outputs and inputs.
fn build_set(
    bytes: &[u8],
    file: &str,
    g: &mut Group,
    default_name: &str,
    limits: &Limits,
) -> Result<(FrfSet, DofIndex, DofIndex, bool)> {
    let mut outputs: Vec<Dof> = Vec::new();
    let mut inputs: Vec<Dof> = Vec::new();
    let mut out_at = DofIndex::new();
    let mut in_at = DofIndex::new();
    for e in &g.entries {
        out_at.entry(place(&e.out)).or_insert_with(|| {
            outputs.push(e.out.clone());
            outputs.len() - 1
        });
        in_at.entry(place(&e.inp)).or_insert_with(|| {
            inputs.push(e.inp.clone());
            inputs.len() - 1
        });
    }
    let n_lines = g.freqs.len();
    let (n_out, n_in) = (outputs.len(), inputs.len());
    limits
        .check_set(
            &format!(
                "the set of {} datasets starting with the dataset at line {}",
                g.entries.len(),
                g.entries[0].line
            ),
            n_lines,
            n_out,
            n_in,
        )
        .map_err(|e| e.at_line(g.entries[0].line).in_file(file))?;
    let mut s = FrfSet::zeros(
        default_name,
        Vec::new(),
        outputs,
        inputs,
        g.out_qty,
        g.in_qty,
    );
    s.freqs = g.freqs.to_vec();
    s.present = vec![false; n_out * n_in];
    if let Role::Spectrum(k) = g.role {
        s.signal = Some(k);
    }
    let mut first_line = vec![0usize; n_out * n_in];
    // (entry, output, input, sign) of the entries kept, copied below
    let mut kept: Vec<(usize, usize, usize, f64)> = Vec::with_capacity(g.entries.len());
    for (n, e) in g.entries.iter().enumerate() {
        let i = out_at.get(&place(&e.out)).copied().unwrap_or(0);
        let j = in_at.get(&place(&e.inp)).copied().unwrap_or(0);
        let sign = e.out.sign() * s.outputs[i].sign() * e.inp.sign() * s.inputs[j].sign();
        let m = i * n_in + j;
        if s.present[m] {
            g.remarks.add(
                format!(
                    "duplicates {} / {} of the dataset at line {}; kept the first",
                    crate::error::quote(&s.outputs[i].to_string()),
                    crate::error::quote(&s.inputs[j].to_string()),
                    first_line[m]
                ),
                e.line,
            );
            continue;
        }
        s.present[m] = true;
        first_line[m] = e.line;
        kept.push((n, i, j, sign));
    }
    // the values into the line-major matrix (fill.rs)
    let cols: Vec<Column> = kept
        .iter()
        .map(|&(n, i, j, sign)| Column {
            values: &g.entries[n].values,
            place: i * n_in + j,
            sign,
        })
        .collect();
    let (data, finite) = line_major(bytes, &cols, n_lines, n_out * n_in);
    s.data = data;
    // a name common to all datasets (ID line 1), else the component
    let first = &g.entries[0].name;
    if !first.is_empty()
        && !first.eq_ignore_ascii_case("none")
        && g.entries.iter().all(|e| &e.name == first)
    {
        s.name = first.clone();
    }
    if let Some(r) = g.run {
        s.name = format!("{} run {r}", s.name);
    }
    s.warnings = g.remarks.render(file);
    Ok((s, out_at, in_at, finite))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_our_own_id_line_2_carries_a_set_tag() {
        let id = |t: &str| {
            let o = own_id2(t);
            (o.signal, o.set)
        };
        assert_eq!(id("accelerance set=2"), (None, Some(2)));
        assert_eq!(id("vibro-acoustic set=11"), (None, Some(11)));
        assert_eq!(id("coherence set=1"), (None, Some(1)));
        assert_eq!(id("signal=rms set=3"), (Some(SignalKind::Rms), Some(3)));
        assert_eq!(id("signal=psd"), (Some(SignalKind::Psd), None));
        assert_eq!(id("mobility"), (None, None));
        // other writers' text: no tag, no marker
        for t in [
            "NONE",
            "run 2",
            "set=2",
            "Accelerance set=2",
            "accelerance set=0",
            "accelerance set=2 x",
            "accelerance set=two",
            "signal=RMS",
            "signal=loud set=1",
        ] {
            assert_eq!(id(t), (None, None), "{t}");
        }
    }

    /// Sets read with even 58b values left in the file equal, bit for
    /// bit, the sets read with every value copied first: FRFs with missing
    /// entries and a sign flip, two sets in one file, coherence and a
    /// spectrum (copied: not FRFs), a dataset 164's units (copied first),
    /// big-endian single precision in mm (a factor to SI), an ASCII dataset
    /// among binary ones; and a non-finite value refused alike. Reference:
    /// the copying read (every reader's path checks against pyuff 2.5.8 in
    /// `tests/uff_pyuff.rs` and hand-built files in `tests/uff_read.rs`),
    /// and the written set's own values (common practice: a faster path
    /// keeps the reference's bits).
    #[test]
    fn values_left_in_the_file_read_as_values_copied() {
        use super::super::write::write;
        use crate::frf::Direction;
        let freqs: Vec<f64> = (0..150).map(|k| 2.0 + 0.75 * k as f64).collect();
        let dof = |n: usize, d| Dof::new("plate", &n.to_string(), d);
        let frf = |name: &str, n_out: usize, n_in: usize, skip: usize| {
            let mut s = FrfSet::zeros(
                name,
                freqs.clone(),
                (0..n_out).map(|i| dof(i + 1, Direction::Z)).collect(),
                (0..n_in).map(|j| dof(40 + j, Direction::X)).collect(),
                Quantity::Acceleration,
                Quantity::Force,
            );
            for k in 0..freqs.len() {
                for i in 0..n_out {
                    for j in 0..n_in {
                        let v = Complex64::new(
                            (k * 7 + i) as f64 * 1.1e-3,
                            -((j + 1) as f64) / (k + 1) as f64,
                        );
                        s.set(k, i, j, v);
                    }
                }
            }
            // `skip`: an entry left out, when the set has it
            if let Some(p) = s.present.get_mut(skip) {
                *p = false;
            }
            s
        };
        let mut a = frf("left", 5, 2, 3);
        a.coherence = Some(vec![0.875; a.data.len()]);
        let b = frf("right", 3, 3, 4);
        let mut spec = FrfSet::zeros(
            "levels",
            freqs.clone(),
            vec![dof(1, Direction::Y)],
            vec![Dof::scalar("", "ref")],
            Quantity::Velocity,
            Quantity::Dimensionless,
        );
        spec.signal = Some(SignalKind::Rms);
        for k in 0..freqs.len() {
            spec.set(k, 0, 0, Complex64::new(1e-4 * (k + 1) as f64, 0.0));
        }
        let two = write(&[a.clone(), b], true).expect("writes");
        let one_spec = write(&[spec], true).expect("writes");
        // a second file's dataset at the same output with a negative
        // direction: one set, that entry read with a sign
        let mut flip = write(&[frf("p", 1, 1, 9)], true).expect("writes");
        let mut neg = frf("q", 1, 1, 9);
        neg.outputs[0].positive = false;
        neg.inputs[0] = dof(41, Direction::X);
        flip.extend(write(&[neg.clone()], true).expect("writes"));
        // an ASCII dataset, then binary ones
        let mut mixed = write(&[frf("ascii", 1, 1, 9)], false).expect("writes");
        mixed.extend(write(&[frf("bin", 2, 1, 9)], true).expect("writes"));
        // big-endian single precision in mm per N
        let mut be = String::from("    -1\n");
        be.push_str(&format!(
            "{:>6}b{:>6}{:>6}{:>12}{:>12}{:>6}{:>6}{:>12}{:>12}\n",
            58, 2, 2, 11, 24, 0, 0, 0, 0
        ));
        for _ in 0..5 {
            be.push_str("NONE\n");
        }
        be.push_str(&format!(
            "{:>5}{:>10}{:>5}{:>10} {:>10}{:>10}{:>4} {:>10}{:>10}{:>4}\n",
            4, 0, 0, 0, "NONE", 3, 2, "NONE", 4, 1
        ));
        be.push_str(&format!(
            "{:>10}{:>10}{:>10}{:>13}{:>13}{:>13}\n",
            5, 3, 1, "1.00000e+00", "2.00000e+00", "0.00000e+00"
        ));
        for (code, unit) in [(18, "Hz"), (8, "mm"), (13, "N"), (0, "NONE")] {
            be.push_str(&format!(
                "{code:>10}{:>5}{:>5}{:>5} {:<20} {:<20}\n",
                0, 0, 0, "NONE", unit
            ));
        }
        let mut be = be.into_bytes();
        for v in [0.5f32, -0.25, 1.5, 2.0, -3.0, 0.125] {
            be.extend_from_slice(&v.to_be_bytes());
        }
        be.extend_from_slice(b"    -1\n");
        // a dataset 164 (SI) before binary datasets
        let mut si = b"    -1\n   164\n         1SI - mks (Newton)  2\n    1.0000000000000000E+00    1.0000000000000000E+00    1.0000000000000000E+00\n    2.7314999999999998E+02\n    -1\n".to_vec();
        si.extend(write(&[frf("si", 2, 2, 0)], true).expect("writes"));
        let bits = |s: &FrfSet| -> Vec<(u64, u64)> {
            s.data
                .iter()
                .map(|v| (v.re.to_bits(), v.im.to_bits()))
                .collect()
        };
        let read = |bytes: &[u8], leave: bool| {
            read_leaving(
                bytes,
                "f.uff",
                None,
                None,
                &Overrides::default(),
                &Limits::default(),
                leave,
            )
        };
        for (what, bytes) in [
            ("two sets", &two),
            ("spectrum", &one_spec),
            ("sign", &flip),
            ("mixed", &mixed),
            ("big-endian", &be),
            ("164", &si),
        ] {
            let left = read(bytes, true).unwrap_or_else(|e| panic!("{what}: {e}"));
            let copied = read(bytes, false).unwrap_or_else(|e| panic!("{what}: {e}"));
            assert_eq!(left.sets.len(), copied.sets.len(), "{what}");
            assert!(!left.sets.is_empty(), "{what}");
            for (l, c) in left.sets.iter().zip(&copied.sets) {
                assert_eq!(bits(l), bits(c), "{what}: {}", l.name);
                assert_eq!(
                    (&l.freqs, &l.present, &l.outputs, &l.inputs),
                    (&c.freqs, &c.present, &c.outputs, &c.inputs),
                    "{what}"
                );
                assert_eq!(
                    (l.out_qty, l.in_qty, l.signal),
                    (c.out_qty, c.in_qty, c.signal),
                    "{what}"
                );
                let cb = |s: &FrfSet| {
                    s.coherence
                        .as_ref()
                        .map(|c| c.iter().map(|v| v.to_bits()).collect::<Vec<_>>())
                };
                assert_eq!(cb(l), cb(c), "{what}");
                assert_eq!(
                    (&l.warnings, &l.provenance),
                    (&c.warnings, &c.provenance),
                    "{what}"
                );
            }
            assert_eq!(left.warnings, copied.warnings, "{what}");
        }
        // the values themselves: the first set as written (its missing entry NaN)
        let left = read(&two, true).expect("reads").sets;
        assert!(left[0].coherence.is_some());
        for k in 0..freqs.len() {
            for m in 0..10 {
                let (i, j) = (m / 2, m % 2);
                let v = left[0].get(k, i, j);
                if m == 3 {
                    assert!(v.re.is_nan() && !left[0].present[m]);
                } else {
                    assert_eq!(v, a.get(k, i, j), "line {k}, {i} / {j}");
                }
            }
        }
        let flipped = &read(&flip, true).expect("reads").sets[0];
        assert_eq!((flipped.n_out(), flipped.n_in()), (1, 2));
        assert!(flipped.outputs[0].positive);
        assert_eq!(flipped.get(7, 0, 1), -neg.get(7, 0, 0));
        let be_set = &read(&be, true).expect("reads").sets[0];
        assert_eq!(be_set.get(2, 0, 0), Complex64::new(-3.0e-3, 0.125e-3));
        // a non-finite value: the same error, at its byte, either way
        let mut bad = write(&[frf("bad", 1, 1, 9)], true).expect("writes");
        let at = bad.len() - 7 - 16 * 3;
        bad[at..at + 8].copy_from_slice(&f64::NAN.to_le_bytes());
        let e1 = read(&bad, true).expect_err("NaN refused").to_string();
        let e2 = read(&bad, false).expect_err("NaN refused").to_string();
        assert_eq!(e1, e2);
        assert!(e1.contains("is NaN; expected a finite number"), "{e1}");
    }
}
