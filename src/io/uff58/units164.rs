//! Dataset 164 (units) and how mortise applies it.
//!
//! Record 1 `(I10,20A1,I10)`: units code (1 SI, 2 BG foot/lbf, 3 MG metre/kgf,
//! 4 BA foot/poundal, 5 MM mm/milli-newton, 6 CM cm/centi-newton, 7 IN
//! inch/lbf, 8 GM mm/kgf, 9 user defined), description (documentation only),
//! temperature mode (1 absolute, 2 relative). Record 2 `(3D25.17)` then
//! `(D25.17)`: length, force, temperature and temperature-offset factors.
//! The layout's own rule (the public dataset 164 description, as reproduced
//! in pyuff 2.5.8 `datasets/dataset_164.py`): **to convert from file units
//! to SI, divide by the factor**. So mm gives length factor 1000, inch
//! 1/0.0254 = 39.370..., lbf 1/4.4482216152605 = 0.22480894...
//!
//! A dataset 164 applies to the datasets that follow it, up to the next 164
//! (a file without one is SI). mortise applies it:
//! * to node coordinates (datasets 15, 2411) and coordinate-system origins
//!   and points (18, 2420): divided by the length factor;
//! * to dataset 55 mode shapes: the residues φφ/m (or ψψ/a) are receptances
//!   (length / force), multiplied by force / length factor (each shape value
//!   by its square root);
//! * to a dataset 58 through [`apply_to_58`], **the one hook** between the
//!   units system and the 58 reader: `scan.rs` calls it on each dataset 58
//!   read after a non-SI 164, before `convert.rs` sees the dataset. An axis
//!   whose units label (record 9 or 10) is given is left to the label (the
//!   label is the more specific statement); an axis without a label has its
//!   values converted to SI by the factor of its quantity (from the specific
//!   data type and the DOF direction: length exponent L − M and force
//!   exponent M of the SI dimension, e.g. acceleration 1 and 0, force 0 and
//!   1, moment 1 and 1, rotation 0 and 0, pressure −2 and 1), squared for
//!   autopower and PSD, and the label is then filled with the SI unit, so
//!   `convert.rs` reads an SI dataset. Exponents written in the record that
//!   disagree with that quantity, an axis whose quantity is unknown, and a
//!   function type whose scaling mortise does not know are refused.

use super::block::Block;
use super::records::Dataset58;
use super::text::{col, parse_int, perr};
use crate::error::{Error, Result};
use crate::units::Quantity;

/// A declared unit system (dataset 164).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct UnitSystem {
    pub code: i64,
    pub description: String,
    /// 1 absolute, 2 relative.
    pub temp_mode: i64,
    /// File units per SI unit: SI value = file value / factor.
    pub length: f64,
    pub force: f64,
    pub temp: f64,
    pub temp_offset: f64,
    /// 1-based line of the dataset's start tag.
    pub line: usize,
}

/// The name of a units code of record 1.
pub fn units_code_name(code: i64) -> &'static str {
    match code {
        1 => "SI: metre (newton)",
        2 => "BG: foot (pound-force)",
        3 => "MG: metre (kilogram-force)",
        4 => "BA: foot (poundal)",
        5 => "MM: mm (milli-newton)",
        6 => "CM: cm (centi-newton)",
        7 => "IN: inch (pound-force)",
        8 => "GM: mm (kilogram-force)",
        9 => "US: user defined",
        _ => "unknown code",
    }
}

impl UnitSystem {
    /// True when lengths and forces are already in m and N.
    pub fn is_si(&self) -> bool {
        self.length == 1.0 && self.force == 1.0
    }
    /// Metres per file length unit.
    pub fn length_to_si(&self) -> f64 {
        1.0 / self.length
    }
    /// SI per file unit of a quantity with these length and force exponents.
    pub fn factor_to_si(&self, len_exp: i32, force_exp: i32) -> f64 {
        1.0 / (self.length.powi(len_exp) * self.force.powi(force_exp))
    }
    /// Receptance (length / force) in SI per file unit.
    pub fn receptance_to_si(&self) -> f64 {
        self.factor_to_si(1, -1)
    }
    /// One line for `inspect`.
    pub fn describe(&self) -> String {
        format!(
            "units (dataset 164, line {}): code {} ({}), '{}', temperature mode {}; SI = file value / factor: length {}, force {}, temperature {}, offset {} (1 file length unit = {} m, 1 file force unit = {} N)",
            self.line,
            self.code,
            units_code_name(self.code),
            crate::error::quote(&self.description),
            self.temp_mode,
            self.length,
            self.force,
            self.temp,
            self.temp_offset,
            1.0 / self.length,
            1.0 / self.force
        )
    }
}

/// Read one dataset 164.
pub(super) fn parse_164(b: &Block) -> Result<UnitSystem> {
    let f1 = "record 1 (units code, description, temperature mode)";
    let (no, t) = b.line(0, f1)?;
    // by columns (I10, 20A1, I10); writers also put the temperature mode
    // right after a short description ("         1SI - mks (Newton)  2"):
    // then the code is the first 10 columns and the mode the last token
    let bad = || {
        perr(
            b.file,
            no,
            f1,
            format!(
                "expected the units code (I10), a description (20 characters) and the temperature mode (I10), found '{}'",
                crate::error::quote(t)
            ),
        )
    };
    let (code, description, temp_mode) = {
        let c = parse_int(col(t, 0, 10).trim());
        let m = parse_int(col(t, 30, 10).trim());
        match (c, m) {
            (Some(c), Some(m)) => (c, col(t, 10, 20).trim().to_string(), m),
            (Some(c), None) => {
                let rest = col(t, 10, usize::MAX);
                let rest = rest.trim_end();
                let (desc, last) = rest.rsplit_once(char::is_whitespace).ok_or_else(bad)?;
                let m = parse_int(last).ok_or_else(bad)?;
                (c, desc.trim().to_string(), m)
            }
            _ => return Err(bad()),
        }
    };
    let f2 = "record 2 (length, force, temperature factors)";
    let v = b.reals(1, 3, 25, f2)?;
    let off = b.reals(2, 1, 25, "record 2 (temperature offset)")?;
    for (k, name) in ["length", "force", "temperature"].iter().enumerate() {
        if v[k] <= 0.0 {
            return Err(b.err(
                1,
                &format!("record 2, {name} factor"),
                format!(
                    "the {name} factor is {}; expected a number above 0 (file units per SI unit)",
                    v[k]
                ),
            ));
        }
    }
    if !(1..=9).contains(&code) {
        return Err(b.err(
            0,
            "record 1, units code",
            format!("units code {code}; expected 1 to 9 (1 SI, 5 mm/mN, 7 inch/lbf, 9 user defined, ...)"),
        ));
    }
    Ok(UnitSystem {
        code,
        description,
        temp_mode,
        length: v[0],
        force: v[1],
        temp: v[2],
        temp_offset: off[0],
        line: b.start,
    })
}

// the one table of data-type codes
use super::convert::quantity_of_code;

/// Length and force exponents of a quantity's SI dimension (mass counts as
/// force · time² / length).
fn exponents(q: Quantity, rot: bool) -> (i32, i32) {
    let d = q.dim(rot);
    (i32::from(d.length - d.mass), i32::from(d.mass))
}

/// Convert the unlabelled axes of one dataset 58 from the units of `sys` to
/// SI (see the module docs). Returns true when values were changed.
pub(super) fn apply_to_58(file: &str, ds: &mut Dataset58, sys: &UnitSystem) -> Result<bool> {
    if sys.is_si() {
        return Ok(false);
    }
    let power: i32 = match ds.func_type {
        6 => return Ok(false),
        1 | 4 | 5 | 12 => 1,
        2 | 9 => 2,
        _ => 0,
    };
    // FRFs and transmissibility have a denominator; spectra and time data not
    let recs: &[usize] = if matches!(ds.func_type, 4 | 5) {
        &[9, 10]
    } else {
        &[9]
    };
    let mut changed = false;
    for &rec in recs {
        let ax = &ds.axes[rec - 8];
        if !ax.units.is_empty() {
            continue;
        }
        let here = |what: &str| {
            Error::unit(what.to_string())
                .field(format!("record {rec}, axis units label"))
                .at_line(ds.record_line(rec))
                .in_file(file)
        };
        if power == 0 {
            return Err(here(&format!(
                "function type {} without a units label follows the unit system of dataset 164 at line {} ({}); mortise cannot tell how these values scale with it; give units labels in records 9 and 10, or write the file in SI",
                ds.func_type,
                sys.line,
                units_code_name(sys.code)
            )));
        }
        let dir = if rec == 9 { ds.rsp_dir } else { ds.ref_dir };
        let rot = (4..=6).contains(&dir.abs());
        let given = (ax.len_exp, ax.force_exp, ax.temp_exp);
        let (q, (le, fe)) = match quantity_of_code(ax.code) {
            Some(q) => {
                let e = exponents(q, rot);
                if given != (0, 0, 0) && given != (e.0, e.1, 0) {
                    return Err(here(&format!(
                        "record {rec} gives length, force and temperature exponents {} {} {} but its specific data type {} ({}) has {} {} 0; mortise cannot tell which to apply with the unit system of dataset 164 at line {}",
                        given.0, given.1, given.2, ax.code, q.name(), e.0, e.1, sys.line
                    )));
                }
                (Some(q), e)
            }
            None if given != (0, 0, 0) && given.2 == 0 => (None, (given.0, given.1)),
            None => {
                return Err(here(&format!(
                    "record {rec} has specific data type {}, no units label and no unit exponents, after the unit system of dataset 164 at line {} ({}); mortise cannot tell the quantity to convert; give a units label",
                    ax.code,
                    sys.line,
                    units_code_name(sys.code)
                )))
            }
        };
        let c = sys.factor_to_si(le, fe).powi(power);
        if rec == 9 {
            ds.y.iter_mut().for_each(|v| *v *= c);
        } else {
            ds.y.iter_mut().for_each(|v| *v /= c);
        }
        if let Some(q) = q {
            let u = q.si_unit(rot);
            ds.axes[rec - 8].units = match (power, ds.func_type) {
                (1, _) => u.to_string(),
                (_, 9) => format!("({u})^2/Hz"),
                _ => format!("({u})^2"),
            };
        }
        changed = true;
    }
    Ok(changed)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sys(length: f64, force: f64) -> UnitSystem {
        UnitSystem {
            code: 9,
            description: String::new(),
            temp_mode: 1,
            length,
            force,
            temp: 1.0,
            temp_offset: 0.0,
            line: 1,
        }
    }

    #[test]
    fn exponents_of_quantities() {
        // acceleration m/s^2: length 1, force 0; force N: 0, 1; moment N*m: 1, 1
        assert_eq!(exponents(Quantity::Acceleration, false), (1, 0));
        assert_eq!(exponents(Quantity::Force, false), (0, 1));
        assert_eq!(exponents(Quantity::Force, true), (1, 1));
        assert_eq!(exponents(Quantity::Pressure, false), (-2, 1));
        assert_eq!(exponents(Quantity::Displacement, true), (0, 0));
    }

    #[test]
    fn inch_and_pound_force_by_the_1959_definitions() {
        // 1 in = 0.0254 m, 1 lbf = 4.4482216152605 N (1959 definitions)
        let s = sys(1.0 / 0.0254, 1.0 / 4.448_221_615_260_5);
        let r = s.factor_to_si(1, -1); // in/lbf in m/N
        assert!((r / (0.0254 / 4.448_221_615_260_5) - 1.0).abs() < 1e-15);
        assert!(!s.is_si());
        assert!(sys(1.0, 1.0).is_si());
    }
}
