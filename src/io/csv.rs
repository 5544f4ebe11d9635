//! (being built)

/// How to read a supplier's CSV: which column is what.
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ColumnMap {}
