//! The recipe's per-component `"uncertainty"` key: how a component's
//! uncertainty is obtained. Exactly one source:
//!
//! * `{"relative": 0.01}`: 1 % of each value (standard uncertainty);
//! * `{"relative": 0.01, "floor_db": -60}`: plus a floor 60 dB below each
//!   FRF's accelerance peak (added in quadrature), or `{"floor_db": -60}`
//!   alone;
//! * `{"averages": 40}`: from the set's coherence, for an H1 estimate of
//!   40 averages (Bendat & Piersol's random error).
//!
//! Every key is used or refused with its name.

use super::model::{self, FrfUncertainty};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use serde::{Deserialize, Serialize};

/// How a component's uncertainty is obtained (see the module docs).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UncertaintySpec {
    /// Relative standard uncertainty of each value (0.01 = 1 %).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub relative: Option<f64>,
    /// Noise floor in dB relative to each FRF's peak (accelerance peak for
    /// motion per force), negative.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub floor_db: Option<f64>,
    /// Averages of an H1 estimate: the uncertainty comes from the coherence.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub averages: Option<f64>,
}

/// The keys of `"uncertainty"`, with their meaning (for the help).
pub const UNCERTAINTY_FIELDS: &[(&str, &str)] = &[
    ("relative", "relative standard uncertainty of each value, e.g. 0.01 for 1 %"),
    ("floor_db", "noise floor in dB below each FRF's peak (accelerance peak for motion per force), e.g. -60; added in quadrature"),
    ("averages", "number of averages of an H1 estimate: the uncertainty from the set's coherence (Bendat & Piersol random error); not with relative or floor_db"),
];

impl UncertaintySpec {
    /// The uncertainty of `set` (the component as loaded).
    pub fn resolve(&self, set: &FrfSet) -> Result<FrfUncertainty> {
        if let Some(r) = self.relative {
            if !(r.is_finite() && r >= 0.0) {
                return Err(Error::recipe(format!(
                    "'relative' is {r}; expected a finite relative standard uncertainty of 0 or more (0.01 for 1 %)"
                ))
                .field("uncertainty.relative"));
            }
        }
        if let Some(f) = self.floor_db {
            if !(f.is_finite() && f < 0.0) {
                return Err(Error::recipe(format!(
                    "'floor_db' is {f}; expected a negative number of dB below each FRF's peak (e.g. -60)"
                ))
                .field("uncertainty.floor_db"));
            }
        }
        match (self.averages, self.relative, self.floor_db) {
            (Some(_), Some(_), _) | (Some(_), _, Some(_)) => Err(Error::recipe(
                "'averages' takes the uncertainty from the coherence; give it alone, or 'relative' and 'floor_db' without it",
            )
            .field("uncertainty.averages")),
            (Some(n), None, None) => {
                model::from_coherence(set, n).map_err(|mut e| {
                e.field = Some("uncertainty.averages".into());
                e
            })
            }
            (None, None, None) => Err(Error::recipe(
                "'uncertainty' is empty; give 'relative' (and 'floor_db'), or 'averages'",
            )
            .field("uncertainty")),
            (None, r, f) => Ok(model::relative_with_floor(set, r.unwrap_or(0.0), f)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;
    use crate::units::Quantity;
    use num_complex::Complex64;

    fn set() -> FrfSet {
        let d = Dof::parse("a:1+Z", "").unwrap();
        let mut s = FrfSet::zeros(
            "a",
            vec![10.0, 20.0],
            vec![d.clone()],
            vec![d],
            Quantity::Acceleration,
            Quantity::Force,
        );
        s.data = vec![Complex64::new(2.0, 0.0), Complex64::new(1.0, 0.0)];
        s
    }

    fn spec(v: serde_json::Value) -> std::result::Result<UncertaintySpec, String> {
        serde_json::from_value(v).map_err(|e| e.to_string())
    }

    #[test]
    fn documented_keys_are_exactly_the_accepted_ones() {
        let e = spec(serde_json::json!({"zz": 1})).unwrap_err();
        let tail = e.split("expected").nth(1).unwrap_or("").to_string();
        let mut got: Vec<&str> = tail
            .split('`')
            .enumerate()
            .filter(|(i, _)| i % 2 == 1)
            .map(|(_, s)| s)
            .collect();
        let mut doc: Vec<&str> = UNCERTAINTY_FIELDS.iter().map(|f| f.0).collect();
        got.sort();
        doc.sort();
        assert_eq!(got, doc);
    }

    #[test]
    fn each_key_changes_the_result_or_is_refused() {
        let s = set();
        let a = spec(serde_json::json!({"relative": 0.01}))
            .unwrap()
            .resolve(&s)
            .unwrap();
        let b = spec(serde_json::json!({"relative": 0.01, "floor_db": -20}))
            .unwrap()
            .resolve(&s)
            .unwrap();
        assert_eq!(a.std, vec![0.02, 0.01]);
        // floor 0.1 × peak 2 = 0.2, in quadrature
        assert!((b.std[1] - (1e-4f64 + 0.04).sqrt()).abs() < 1e-15);
        let e = spec(serde_json::json!({"relativ": 0.01})).unwrap_err();
        assert!(e.contains("relativ"), "{e}");
        let e = spec(serde_json::json!({"relative": -0.01}))
            .unwrap()
            .resolve(&s)
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some("uncertainty.relative"));
        let e = spec(serde_json::json!({"floor_db": 3}))
            .unwrap()
            .resolve(&s)
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some("uncertainty.floor_db"));
        let e = spec(serde_json::json!({"averages": 10, "relative": 0.01}))
            .unwrap()
            .resolve(&s)
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some("uncertainty.averages"));
        // no coherence in the set: refused naming the key
        let e = spec(serde_json::json!({"averages": 10}))
            .unwrap()
            .resolve(&s)
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some("uncertainty.averages"));
        assert!(e.message.contains("coherence"), "{e}");
        let e = spec(serde_json::json!({}))
            .unwrap()
            .resolve(&s)
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some("uncertainty"));
    }
}
