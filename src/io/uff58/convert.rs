//! The layout's codes and units labels to and from mortise's quantities and
//! SI: direction codes of record 6 and [`Direction`], specific data types of
//! records 8-11 and [`Quantity`], units labels of records 9 and 10 to
//! factors to SI (FRFs and spectra), and the frequency axis of record 8.
//! Reading and writing use the same tables here, so each code has one home.
//!
//! Not here: grouping datasets into sets (`group.rs`), text (`parse.rs`).

use super::group::Remarks;
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

fn quantity_of_code(code: i32) -> Option<Quantity> {
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

/// The quantity of an ordinate axis from its code, or from its units label
/// when the code is 0 (unknown) or 1 (general).
pub(super) fn axis_quantity(
    file: &str,
    ds: &Dataset58,
    rec: usize,
    rot: bool,
    allow_unknown: bool,
) -> Result<Option<Quantity>> {
    let ax = &ds.axes[rec - 8];
    if let Some(q) = quantity_of_code(ax.code) {
        return Ok(Some(q));
    }
    if matches!(ax.code, 0 | 1) {
        if !ax.units.is_empty() {
            if let Ok(u) = units::parse_unit(&ax.units) {
                for q in Quantity::ALL {
                    if q.dim(rot) == u.dim {
                        return Ok(Some(q));
                    }
                }
            }
        }
        if allow_unknown {
            return Ok(None);
        }
        return Err(Error::quantity(format!(
            "specific data type {} ({}) with units label '{}' does not tell the quantity; expected 8 (displacement), 9 (reaction force), 11 (velocity), 12 (acceleration), 13 (excitation force) or 15 (pressure), or a units label such as m/s",
            ax.code,
            data_type_name(ax.code),
            crate::error::quote(&ax.units)
        ))
        .field(format!("record {rec}, specific data type"))
        .at_line(ds.record_line(rec))
        .in_file(file));
    }
    Err(Error::quantity(format!(
        "specific data type {} ({}) is not a quantity mortise reads; expected 8 (displacement), 9 (reaction force), 11 (velocity), 12 (acceleration), 13 (excitation force) or 15 (pressure)",
        ax.code,
        data_type_name(ax.code)
    ))
    .field(format!("record {rec}, specific data type"))
    .at_line(ds.record_line(rec))
    .in_file(file))
}

/// Factor to SI of an FRF dataset from the labels of records 9 and 10.
#[allow(clippy::too_many_arguments)]
pub(super) fn frf_factor(
    file: &str,
    ds: &Dataset58,
    oq: Quantity,
    orot: bool,
    iq: Quantity,
    irot: bool,
    rm: &mut Remarks,
) -> Result<f64> {
    let l9 = &ds.axes[1].units;
    let l10 = &ds.axes[2].units;
    let f9 = "record 9, axis units label";
    let f10 = "record 10, axis units label";
    let den = |rm: &mut Remarks| -> Result<f64> {
        if l10.is_empty() {
            rm.add(
                format!(
                    "the units label of record 10 is empty; assumed SI ({})",
                    iq.si_unit(irot)
                ),
                ds.line,
            );
            Ok(1.0)
        } else {
            units::factor_for(l10, iq, irot).map_err(|e| unit_err(file, ds.record_line(10), f10, e))
        }
    };
    if l9.is_empty() {
        rm.add(
            format!(
                "the units label of record 9 is empty; assumed SI ({})",
                oq.si_unit(orot)
            ),
            ds.line,
        );
        return den(rm);
    }
    let u = units::parse_unit(l9).map_err(|e| unit_err(file, ds.record_line(9), f9, e))?;
    if u.dim == oq.dim(orot) {
        return Ok(u.factor / den(rm)?);
    }
    if u.dim == oq.dim(orot).times(iq.dim(irot).inv()) {
        // the whole ratio in record 9
        return Ok(u.factor);
    }
    Err(Error::unit(format!(
        "units label '{}' does not fit record 9's data type {} ({}); expected a unit of {} such as {} (or of the ratio, such as {}/{})",
        crate::error::quote(l9),
        ds.axes[1].code,
        data_type_name(ds.axes[1].code),
        oq,
        oq.si_unit(orot),
        oq.si_unit(orot),
        iq.si_unit(irot)
    ))
    .field(f9)
    .at_line(ds.record_line(9))
    .in_file(file))
}

/// Factor to SI of a spectrum dataset (record 9 label).
pub(super) fn spectrum_factor(
    file: &str,
    ds: &Dataset58,
    q: Quantity,
    rot: bool,
    kind: SignalKind,
    rm: &mut Remarks,
) -> Result<f64> {
    let l9 = &ds.axes[1].units;
    let (want, si) = match kind {
        SignalKind::Peak | SignalKind::Rms => (q.dim(rot), q.si_unit(rot).to_string()),
        SignalKind::Autopower => (q.dim(rot).pow(2), format!("({})^2", q.si_unit(rot))),
        SignalKind::Psd => (
            q.dim(rot).pow(2).times(Dim::new(0, 0, 1, 0)),
            format!("({})^2/Hz", q.si_unit(rot)),
        ),
    };
    if l9.is_empty() {
        rm.add(
            format!("the units label of record 9 is empty; assumed SI ({si})"),
            ds.line,
        );
        return Ok(1.0);
    }
    let f9 = "record 9, axis units label";
    let u = units::parse_unit(l9).map_err(|e| unit_err(file, ds.record_line(9), f9, e))?;
    if u.dim == want {
        return Ok(u.factor);
    }
    Err(Error::unit(format!(
        "units label '{}' does not fit record 9's data type {} ({}) for a {}; expected dimension {} such as {si}",
        crate::error::quote(l9),
        ds.axes[1].code,
        data_type_name(ds.axes[1].code),
        function_type_name(ds.func_type).unwrap_or("function"),
        units::dim_text(want)
    ))
    .field(f9)
    .at_line(ds.record_line(9))
    .in_file(file))
}

/// The frequencies of a dataset in Hz.
pub(super) fn frequencies(file: &str, ds: &Dataset58, rm: &mut Remarks) -> Result<Vec<f64>> {
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
    let f: Vec<f64> = ds.x.iter().map(|v| v * factor).collect();
    crate::grid::check_grid(&f).map_err(|e| {
        e.field("abscissa (frequency grid)")
            .at_line(ds.record_line(7))
            .in_file(file)
    })?;
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
