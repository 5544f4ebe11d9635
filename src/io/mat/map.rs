//! The MAT mapping: which variable of a MAT-file is the frequency vector,
//! which the FRF array and how its dimensions are laid out, where the DOF
//! labels come from, and the quantities and unit of the values. It is the
//! `"mat"` object of the import options (recipe `"import"`, the page, the
//! CLI's `--mat-*` options), in the spirit of the CSV column map.

use crate::error::{Error, Result};
use crate::io::csv::FreqUnit;
use crate::units::Quantity;

/// How the FRF array's dimensions are laid out.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum MatLayout {
    /// n_out × n_in × n_lines: `H(i, j, k)` is output i per input j at line k.
    OutInFreq,
    /// n_lines × n_out × n_in: `H(k, i, j)`.
    FreqOutIn,
    /// n_lines × n_frf: one FRF per column, DOF pairs given per column.
    FreqFrf,
    /// n_frf × n_lines: one FRF per row, DOF pairs given per row.
    FrfFreq,
}

impl MatLayout {
    pub const NAMES: &'static str = "out-in-freq, freq-out-in, freq-frf or frf-freq";
    pub fn parse(s: &str) -> Result<MatLayout> {
        Ok(match s.trim().to_ascii_lowercase().as_str() {
            "out-in-freq" => MatLayout::OutInFreq,
            "freq-out-in" => MatLayout::FreqOutIn,
            "freq-frf" => MatLayout::FreqFrf,
            "frf-freq" => MatLayout::FrfFreq,
            _ => {
                return Err(Error::usage(format!(
                    "unknown layout '{}'; expected {}",
                    crate::error::quote(s),
                    Self::NAMES
                ))
                .field("layout"))
            }
        })
    }
    pub fn name(self) -> &'static str {
        match self {
            MatLayout::OutInFreq => "out-in-freq",
            MatLayout::FreqOutIn => "freq-out-in",
            MatLayout::FreqFrf => "freq-frf",
            MatLayout::FrfFreq => "frf-freq",
        }
    }
    /// A matrix (3-D) layout, as opposed to a list of FRFs (2-D).
    pub fn is_matrix(self) -> bool {
        matches!(self, MatLayout::OutInFreq | MatLayout::FreqOutIn)
    }
}

/// How to read a MAT-file: every key is used or refused.
///
/// DOFs: with a matrix layout, `out_dofs` (or the variable `out_dofs_var`)
/// name the n_out rows and `in_dofs` (or `in_dofs_var`) the n_in columns;
/// with a list layout, entry k of each names FRF k's output and input.
/// Labels are `node+Z` or `component:node+Z`; a label variable is a cell
/// array of strings or a char matrix (one label per row). Values are
/// converted to SI: `SI value = factor(unit) × value`.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MatMap {
    /// The frequency vector's variable name.
    pub freq: String,
    #[serde(default)]
    pub freq_unit: FreqUnit,
    /// The FRF array's variable name (complex or real).
    pub frf: String,
    pub layout: MatLayout,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub out_dofs: Vec<String>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub in_dofs: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub out_dofs_var: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub in_dofs_var: Option<String>,
    /// The unit of the values, e.g. "g/N", "mm/s/N"; empty = SI.
    #[serde(default)]
    pub unit: String,
    pub out_qty: Quantity,
    /// Required for FRFs; refused for spectra (their input is the reference).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub in_qty: Option<Quantity>,
    /// The supplier used the e^{-iωt} convention: values are conjugated.
    #[serde(default)]
    pub conjugate: bool,
    /// Set name (default: the component name).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
}

/// The keys of a MAT mapping, for messages.
pub const KEYS_HELP: &str = "\"freq\" (variable), \"frf\" (variable), \"layout\" (out-in-freq, freq-out-in, \
freq-frf or frf-freq), the DOFs as \"out_dofs\"/\"in_dofs\" (lists of labels) or \"out_dofs_var\"/\"in_dofs_var\" \
(a cell array of label strings in the file), \"out_qty\", \"in_qty\" and \"unit\" (optional: \"freq_unit\", \
\"conjugate\", \"name\"); on the command line --mat-freq, --mat-frf, --mat-layout, --out-dof/--in-dof or \
--mat-out-dofs-var/--mat-in-dofs-var, --out-qty, --in-qty, --unit";

/// A MAT mapping from its JSON form; errors name the key.
pub fn map_from_json(v: serde_json::Value) -> Result<MatMap> {
    serde_json::from_value::<MatMap>(v).map_err(|e| {
        Error::usage(format!(
            "{}; a MAT mapping has the keys {KEYS_HELP}",
            crate::error::quote_upto(&e.to_string(), 200)
        ))
        .field("mat")
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_form_and_unknown_keys() {
        let m = map_from_json(serde_json::json!({
            "freq": "f", "frf": "H", "layout": "out-in-freq",
            "out_dofs_var": "outs", "in_dofs": ["wall:1+Z"],
            "out_qty": "acceleration", "in_qty": "force", "unit": "g/N"
        }))
        .unwrap();
        assert_eq!(m.layout, MatLayout::OutInFreq);
        assert_eq!(m.in_qty, Some(Quantity::Force));
        let back: MatMap = serde_json::from_value(serde_json::to_value(&m).unwrap()).unwrap();
        assert_eq!(back, m);
        let e = map_from_json(serde_json::json!({
            "freq": "f", "frf": "H", "layout": "out-in-freq", "out_qty": "force", "dofs": "x"
        }))
        .unwrap_err();
        assert!(e.message.contains("unknown field `dofs`"), "{e}");
        assert!(MatLayout::parse("in-out-freq").is_err());
    }
}
