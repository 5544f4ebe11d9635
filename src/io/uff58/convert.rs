//! The layout's codes and units labels to and from mortise's quantities and
//! SI: direction codes of record 6 and [`Direction`], specific data types of
//! records 8-11 and [`Quantity`], units labels of records 9 and 10 to
//! factors to SI (FRFs and spectra), and the frequency axis of record 8.
//! Reading and writing use the same tables here, so each code has one home.
//!
//! Not here: grouping datasets into sets (`group.rs`), text (`parse.rs`).

use super::group::Remarks;
use super::payload::even_abscissa;
use super::records::{data_type_name, function_type_name, Dataset58};
use crate::error::{Error, Result};
use crate::frf::{Direction, Dof, SignalKind};
use crate::units::{self, Dim, Quantity};

pub(super) fn dir_of(code: i32) -> (Direction, bool) {
    let d = match code.abs() {
        1 => Direction::X,
        2 => Direction::Y,
        3 => Direction::Z,
        4 => Direction::RX,
        5 => Direction::RY,
        6 => Direction::RZ,
        _ => Direction::Scalar,
    };
    (d, code >= 0)
}

pub(super) fn dir_code(d: &Dof) -> i32 {
    let c = match d.dir {
        Direction::X => 1,
        Direction::Y => 2,
        Direction::Z => 3,
        Direction::RX => 4,
        Direction::RY => 5,
        Direction::RZ => 6,
        Direction::Scalar => 0,
    };
    if d.positive {
        c
    } else {
        -c
    }
}

pub(super) fn quantity_of_code(code: i32) -> Option<Quantity> {
    Some(match code {
        8 => Quantity::Displacement,
        9 | 13 => Quantity::Force,
        11 => Quantity::Velocity,
        12 => Quantity::Acceleration,
        15 => Quantity::Pressure,
        _ => return None,
    })
}

fn unit_err(file: &str, line: usize, field: &str, e: Error) -> Error {
    e.field(field).at_line(line).in_file(file)
}

/// Quantities a label can name (not `Dimensionless`: a ratio of like
/// quantities is found by the specific data types).
const NAMED: [Quantity; 6] = [
    Quantity::Displacement,
    Quantity::Velocity,
    Quantity::Acceleration,
    Quantity::Force,
    Quantity::Pressure,
    Quantity::VolumeVelocity,
];

/// The quantity whose SI dimension is `d`.
fn quantity_of_dim(d: Dim, rot: bool) -> Option<Quantity> {
    NAMED.into_iter().find(|q| q.dim(rot) == d)
}

/// The quantity pair of a ratio label (`(m/s^2)/N`): per force first (the
/// FRF of structural dynamics), else the one pair that fits.
fn ratio_of_dim(d: Dim, orot: bool, irot: bool) -> Option<(Quantity, Quantity)> {
    let fits = |a: Quantity, b: Quantity| a != b && a.dim(orot).times(b.dim(irot).inv()) == d;
    if let Some(a) = NAMED.into_iter().find(|a| fits(*a, Quantity::Force)) {
        return Some((a, Quantity::Force));
    }
    let all: Vec<(Quantity, Quantity)> = NAMED
        .into_iter()
        .flat_map(|a| NAMED.into_iter().map(move |b| (a, b)))
        .filter(|(a, b)| fits(*a, *b))
        .collect();
    match all.as_slice() {
        [one] => Some(*one),
        _ => None,
    }
}

const CODES_KNOWN: &str =
    "8 (displacement), 9 (reaction force), 11 (velocity), 12 (acceleration), 13 (excitation force) or 15 (pressure)";

/// The override a user gives when a file does not tell its quantities.
pub(super) const QTY_OVERRIDE: &str =
    "the import options \"out_qty\" and \"in_qty\" (CLI --uff-out-qty / --uff-in-qty)";

/// What records 9 and 10 say an FRF-like dataset (function type 4, 5 or 0)
/// relates: the quantity pair and the factor of its values to SI.
pub(super) struct FrfMeaning {
    pub out: Option<Quantity>,
    pub inp: Option<Quantity>,
    pub factor: f64,
}

fn parse_label(file: &str, ds: &Dataset58, rec: usize) -> Result<Option<units::Unit>> {
    let l = &ds.axes[rec - 8].units;
    if l.is_empty() {
        return Ok(None);
    }
    units::parse_unit(l).map(Some).map_err(|e| {
        unit_err(
            file,
            ds.record_line(rec),
            &format!("record {rec}, axis units label"),
            e,
        )
    })
}

/// Code of record `rec` and what its label says, cross-checked: the label
/// wins (it carries the unit), a disagreement is a remark naming both.
fn cross_check(
    ds: &Dataset58,
    rec: usize,
    code_q: Option<Quantity>,
    label_q: Option<Quantity>,
    rm: &mut Remarks,
) -> Option<Quantity> {
    match (code_q, label_q) {
        (Some(c), Some(l)) if c != l => {
            let ax = &ds.axes[rec - 8];
            rm.add(
                format!(
                    "record {rec}: specific data type {} ({}) disagrees with the units label '{}' ({l}); read as {l}, as the label says",
                    ax.code,
                    data_type_name(ax.code),
                    crate::error::quote(&ax.units)
                ),
                ds.line,
            );
            Some(l)
        }
        (c, l) => l.or(c),
    }
}

/// Records 9 and 10 of an FRF-like dataset: specific data types and units
/// labels, a ratio label in record 9 (`(1/N)*(m/s²)`, `g/lbf`) included.
/// A label that does not parse, or names no quantity, is an error: it
/// would change the numbers.
pub(super) fn frf_meaning(
    file: &str,
    ds: &Dataset58,
    orot: bool,
    irot: bool,
    rm: &mut Remarks,
) -> Result<FrfMeaning> {
    let (a9, a10) = (&ds.axes[1], &ds.axes[2]);
    let code9 = quantity_of_code(a9.code);
    let code10 = quantity_of_code(a10.code);
    let u9 = parse_label(file, ds, 9)?;
    let u10 = parse_label(file, ds, 10)?;
    let misfit = |rec: usize, u: &units::Unit| {
        let ax = &ds.axes[rec - 8];
        Error::unit(format!(
            "units label '{}' (dimension {}) names no quantity mortise reads, nor a ratio of two; specific data type {} ({}); expected a unit such as m/s^2, N, Pa or a ratio such as (m/s^2)/N",
            crate::error::quote(&u.text),
            units::dim_text(u.dim),
            ax.code,
            data_type_name(ax.code)
        ))
        .field(format!("record {rec}, axis units label"))
        .at_line(ds.record_line(rec))
        .in_file(file)
    };
    // the whole ratio in record 9?
    if let Some(u) = &u9 {
        if quantity_of_dim(u.dim, orot).is_none() && u.dim != Dim::NONE {
            let Some((lo, li)) = ratio_of_dim(u.dim, orot, irot) else {
                return Err(misfit(9, u));
            };
            let out = cross_check(ds, 9, code9, Some(lo), rm);
            let inp = cross_check(ds, 10, code10, Some(li), rm);
            if u10.is_some() {
                rm.add(
                    format!(
                        "record 9 holds the whole ratio '{}'; the units label of record 10 ('{}') is not applied again",
                        crate::error::quote(&u.text),
                        crate::error::quote(&a10.units)
                    ),
                    ds.line,
                );
            }
            return Ok(FrfMeaning {
                out,
                inp,
                factor: u.factor,
            });
        }
        if u.dim == Dim::NONE && u10.is_none() {
            // a ratio of like quantities (g/g, 1): the codes tell which
            let q = code9.or(code10);
            return Ok(FrfMeaning {
                out: q,
                inp: q,
                factor: u.factor,
            });
        }
    }
    let side = |rec: usize,
                code: Option<Quantity>,
                u: &Option<units::Unit>,
                rot: bool,
                rm: &mut Remarks|
     -> Result<(Option<Quantity>, f64)> {
        match u {
            None => {
                if let Some(q) = code {
                    rm.add(
                        format!(
                            "the units label of record {rec} is empty; assumed SI ({})",
                            q.si_unit(rot)
                        ),
                        ds.line,
                    );
                }
                Ok((code, 1.0))
            }
            Some(u) => match quantity_of_dim(u.dim, rot) {
                Some(l) => Ok((cross_check(ds, rec, code, Some(l), rm), u.factor)),
                None => Err(misfit(rec, u)),
            },
        }
    };
    let (out, f9) = side(9, code9, &u9, orot, rm)?;
    let (inp, f10) = side(10, code10, &u10, irot, rm)?;
    Ok(FrfMeaning {
        out,
        inp,
        factor: f9 / f10,
    })
}

/// An error for a dataset whose quantities are not told by the file.
pub(super) fn untold(file: &str, ds: &Dataset58, what: &str) -> Error {
    Error::quantity(format!(
        "function type {} ({}): {what}; record 9 has specific data type {} ({}) and units label '{}', record 10 has {} ({}) and '{}'; expected specific data types {CODES_KNOWN} or units labels such as m/s^2 and N; or give the quantities with {QTY_OVERRIDE}",
        ds.func_type,
        function_type_name(ds.func_type).unwrap_or("unknown"),
        ds.axes[1].code,
        data_type_name(ds.axes[1].code),
        crate::error::quote(&ds.axes[1].units),
        ds.axes[2].code,
        data_type_name(ds.axes[2].code),
        crate::error::quote(&ds.axes[2].units),
    ))
    .field("records 9 and 10, specific data type and units label")
    .at_line(ds.record_line(9))
    .in_file(file)
}

/// What record 9 (and 10 for a cross spectrum) says a spectrum dataset holds.
pub(super) struct SpectrumMeaning {
    pub kind: SignalKind,
    pub qty: Quantity,
    /// The reference DOF's quantity (cross spectra).
    pub ref_qty: Option<Quantity>,
    pub factor: f64,
    /// The label is an amplitude spectral density (unit/√Hz): the values are
    /// squared, then read as a PSD.
    pub square: bool,
}

/// The dimension a spectrum of `kind` of quantity `q` has in SI.
fn spectrum_dim(kind: SignalKind, q: Dim, r: Dim) -> Dim {
    let s = Dim::new(0, 0, 1, 0);
    match kind {
        SignalKind::Peak | SignalKind::Rms => q,
        SignalKind::Autopower => q.pow(2),
        SignalKind::Psd => q.pow(2).times(s),
        SignalKind::Esd => q.pow(2).times(s).times(s),
        SignalKind::Cross => q.times(r),
    }
}

fn spectrum_si(kind: SignalKind, q: Quantity, rot: bool, r: Option<Quantity>) -> String {
    let u = q.si_unit(rot);
    match kind {
        SignalKind::Peak | SignalKind::Rms => u.to_string(),
        SignalKind::Autopower => format!("({u})^2"),
        SignalKind::Psd => format!("({u})^2/Hz"),
        SignalKind::Esd => format!("({u})^2*s/Hz"),
        SignalKind::Cross => match r {
            Some(r) if r != q => format!("({u})*({})", r.si_unit(false)),
            _ => format!("({u})^2"),
        },
    }
}

/// Record 9 (and 10 for a cross spectrum) of a spectrum dataset: the
/// quantity from the specific data type and the units label, cross-checked
/// (the label wins, a disagreement is a remark), and the factor to SI.
/// `kind` None: a general function (type 0) whose kind the label decides
/// (a unit of a quantity: a peak spectrum; its square: autopower; per Hz: PSD).
pub(super) fn spectrum_meaning(
    file: &str,
    ds: &Dataset58,
    kind: Option<SignalKind>,
    rot: bool,
    rm: &mut Remarks,
) -> Result<Option<SpectrumMeaning>> {
    let a9 = &ds.axes[1];
    let code9 = quantity_of_code(a9.code);
    let code10 = quantity_of_code(ds.axes[2].code);
    let f9 = "record 9, axis units label";
    let kinds: Vec<SignalKind> = match kind {
        Some(k) => vec![k],
        None => vec![SignalKind::Peak, SignalKind::Autopower, SignalKind::Psd],
    };
    if a9.units.is_empty() {
        let (Some(k), Some(q)) = (kind, code9) else {
            return Ok(None);
        };
        let r = (k == SignalKind::Cross).then(|| code10.unwrap_or(q));
        rm.add(
            format!(
                "the units label of record 9 is empty; assumed SI ({})",
                spectrum_si(k, q, rot, r)
            ),
            ds.line,
        );
        return Ok(Some(SpectrumMeaning {
            kind: k,
            qty: q,
            ref_qty: r,
            factor: 1.0,
            square: false,
        }));
    }
    // candidates: the code's quantity first, then every other
    let mut cands: Vec<Quantity> = code9.into_iter().collect();
    cands.extend(NAMED.into_iter().filter(|q| Some(*q) != code9));
    let found = |d: Dim, ks: &[SignalKind]| -> Option<(SignalKind, Quantity, Option<Quantity>)> {
        for &k in ks {
            for &q in &cands {
                let r = if k == SignalKind::Cross {
                    code10.unwrap_or(q)
                } else {
                    Quantity::Dimensionless
                };
                if spectrum_dim(k, q.dim(rot), r.dim(false)) == d {
                    return Some((k, q, (k == SignalKind::Cross).then_some(r)));
                }
            }
        }
        None
    };
    let meaning = |k: SignalKind,
                   q: Quantity,
                   r: Option<Quantity>,
                   factor: f64,
                   square: bool,
                   rm: &mut Remarks| {
        let qty = cross_check(ds, 9, code9, Some(q), rm).unwrap_or(q);
        SpectrumMeaning {
            kind: k,
            qty,
            ref_qty: r,
            factor,
            square,
        }
    };
    match units::parse_unit(&a9.units) {
        Ok(u) => {
            if let Some((k, q, r)) = found(u.dim, &kinds) {
                return Ok(Some(meaning(k, q, r, u.factor, false, rm)));
            }
            // an ESD labelled without its "/Hz" (g^2 s)
            if kind == Some(SignalKind::Esd) {
                let per_hz = u.dim.times(Dim::new(0, 0, 1, 0));
                if let Some((k, q, r)) = found(per_hz, &kinds) {
                    rm.add(
                        format!(
                            "energy spectral density labelled '{}' without '/Hz'; read as {}",
                            crate::error::quote(&a9.units),
                            spectrum_si(k, q, rot, r)
                        ),
                        ds.line,
                    );
                    return Ok(Some(meaning(k, q, r, u.factor, false, rm)));
                }
            }
            if kind.is_none() {
                return Ok(None);
            }
            let k = kinds[0];
            let q = code9.unwrap_or(Quantity::Acceleration);
            Err(Error::unit(format!(
                "units label '{}' does not fit record 9's data type {} ({}) for {}; expected dimension {} such as {}",
                crate::error::quote(&a9.units),
                a9.code,
                data_type_name(a9.code),
                k.describe(),
                units::dim_text(spectrum_dim(k, q.dim(rot), code10.unwrap_or(q).dim(false))),
                spectrum_si(k, q, rot, (k == SignalKind::Cross).then(|| code10.unwrap_or(q)))
            ))
            .field(f9)
            .at_line(ds.record_line(9))
            .in_file(file))
        }
        Err(e) => {
            // an amplitude spectral density (m/s/√Hz): read as a PSD
            let asd_ok = matches!(
                kind,
                None | Some(SignalKind::Psd | SignalKind::Peak | SignalKind::Rms)
            );
            if asd_ok {
                if let Ok(u2) = units::parse_unit_squared(&a9.units) {
                    if let Some((k, q, r)) = found(u2.dim, &[SignalKind::Psd]) {
                        rm.add(
                            format!(
                                "units label '{}' is an amplitude spectral density; the values are squared and read as a PSD in {}",
                                crate::error::quote(&a9.units),
                                spectrum_si(k, q, rot, r)
                            ),
                            ds.line,
                        );
                        return Ok(Some(meaning(k, q, r, u2.factor, true, rm)));
                    }
                }
            }
            Err(unit_err(file, ds.record_line(9), f9, e))
        }
    }
}

/// The last abscissa read and its frequencies, so that the datasets of one
/// grid (most files) are scaled and checked once, not once each.
#[derive(Default)]
pub(super) struct LastGrid {
    x: Vec<f64>,
    factor: f64,
    freqs: Option<std::rc::Rc<[f64]>>,
    /// the abscissa of a dataset whose values are left in the file
    formed: Vec<f64>,
}

/// The frequencies of a dataset in Hz (`last`: the previous dataset's, kept
/// for the next; an abscissa and factor bit for bit equal give the same
/// frequencies and the same check, and share them).
pub(super) fn frequencies(
    file: &str,
    ds: &Dataset58,
    rm: &mut Remarks,
    last: &mut LastGrid,
) -> Result<std::rc::Rc<[f64]>> {
    let ax = &ds.axes[0];
    let field = "record 8, specific data type";
    match ax.code {
        18 => {}
        0 | 1 => rm.add(
            format!(
                "abscissa specific data type {} ({}); read the abscissa as frequency",
                ax.code,
                data_type_name(ax.code)
            ),
            ds.line,
        ),
        c => {
            return Err(Error::unsupported(format!(
                "abscissa specific data type {c} ({}); expected 18 (frequency)",
                data_type_name(c)
            ))
            .field(field)
            .at_line(ds.record_line(8))
            .in_file(file))
        }
    }
    let factor = if ax.units.is_empty() {
        1.0
    } else {
        let u = units::parse_unit(&ax.units)
            .map_err(|e| unit_err(file, ds.record_line(8), "record 8, axis units label", e))?;
        if u.dim != Dim::new(0, 0, -1, 0) {
            return Err(Error::unit(format!(
                "abscissa units label '{}' is not a frequency unit; expected Hz",
                crate::error::quote(&ax.units)
            ))
            .field("record 8, axis units label")
            .at_line(ds.record_line(8))
            .in_file(file));
        }
        u.factor
    };
    let LastGrid {
        x: last_x,
        factor: last_factor,
        freqs: last_freqs,
        formed,
    } = last;
    // an abscissa left in the file is formed as the parse forms it
    let x: &[f64] = match ds.payload {
        Some(p) => {
            even_abscissa(ds.x_min, ds.x_inc, p.n_pts, formed);
            formed
        }
        None => &ds.x,
    };
    let same = |a: &[f64], b: &[f64]| {
        a.len() == b.len() && a.iter().zip(b).all(|(p, q)| p.to_bits() == q.to_bits())
    };
    if let Some(f) = last_freqs {
        if factor.to_bits() == last_factor.to_bits() && same(last_x, x) {
            return Ok(f.clone());
        }
    }
    let f: std::rc::Rc<[f64]> = x.iter().map(|v| v * factor).collect();
    crate::grid::check_grid(&f).map_err(|e| {
        e.field("abscissa (frequency grid)")
            .at_line(ds.record_line(7))
            .in_file(file)
    })?;
    *last_x = x.to_vec();
    *last_factor = factor;
    *last_freqs = Some(f.clone());
    Ok(f)
}

pub(super) fn out_code(q: Quantity) -> i32 {
    match q {
        Quantity::Displacement => 8,
        Quantity::Velocity => 11,
        Quantity::Acceleration => 12,
        Quantity::Force => 9,
        Quantity::Pressure => 15,
        Quantity::VolumeVelocity => 1,
        Quantity::Dimensionless => 0,
    }
}

pub(super) fn in_code(q: Quantity) -> i32 {
    match q {
        Quantity::Force => 13,
        o => out_code(o),
    }
}
