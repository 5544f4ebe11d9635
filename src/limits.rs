//! The resource budget: how much memory, computation and file size one
//! request may ask for.
//!
//! Recipes, bundles and supplier files travel between companies; a few
//! kilobytes of them can claim a million-line grid, a 10,000-element beam or
//! a header of 10,000 DOFs. Every size derived from user numbers is computed
//! with checked arithmetic and compared with the budget *before* anything is
//! allocated or solved; a request over budget fails with
//! [`ErrorKind::Budget`](crate::error::ErrorKind::Budget), naming what asked,
//! the size asked for, the budget, and how to raise it (CLI `--budget-gb`,
//! `--work-budget`, `--max-file-mb`; the page's settings).
//!
//! The defaults suit a laptop (documented in README "Limits"):
//! - memory: 2 GiB of data per request (134,217,728 complex values);
//! - work: 5·10¹⁰ floating-point operations per request, estimated
//!   (about a minute on one core of this machine's class);
//! - files: 256 MiB per file, regular files only.

use crate::error::{Error, Result};

/// Bytes of one complex value (two f64).
pub const COMPLEX_BYTES: u64 = 16;

/// The budget of one request (a recipe run, a conversion, a file read).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Limits {
    /// Largest memory one request may ask for, in bytes.
    pub memory_bytes: u64,
    /// Largest estimated number of floating-point operations.
    pub work: f64,
    /// Largest file read, in bytes.
    pub file_bytes: u64,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            memory_bytes: 2 << 30,
            work: 5e10,
            file_bytes: 256 << 20,
        }
    }
}

/// Bytes in words: "25.6 GB", "512 MB", "3 kB".
pub fn bytes_text(b: u64) -> String {
    let x = b as f64;
    if x >= 1e9 {
        format!("{:.1} GB", x / 1e9)
    } else if x >= 1e6 {
        format!("{:.0} MB", x / 1e6)
    } else if x >= 1e3 {
        format!("{:.0} kB", x / 1e3)
    } else {
        format!("{b} bytes")
    }
}

/// The product of counts, or `None` when it overflows `u64`.
pub fn product(dims: &[usize]) -> Option<u64> {
    dims.iter()
        .try_fold(1u64, |acc, &d| acc.checked_mul(u64::try_from(d).ok()?))
}

impl Limits {
    /// Refuse `what` when holding `values` complex values (possibly
    /// several arrays' worth, summed by the caller) exceeds the memory
    /// budget. `values` is `None` when its computation overflowed.
    pub fn check_values(&self, what: &str, values: Option<u64>) -> Result<()> {
        let bytes = values.and_then(|v| v.checked_mul(COMPLEX_BYTES));
        self.check_bytes(what, bytes)
    }

    /// Refuse `what` when `lines × outputs × inputs` complex values exceed
    /// the memory budget.
    pub fn check_set(&self, what: &str, lines: usize, outputs: usize, inputs: usize) -> Result<()> {
        self.check_values(what, product(&[lines, outputs, inputs]))
            .map_err(|e| {
                Error::new(
                    e.kind,
                    format!(
                        "{} ({lines} lines × {outputs} outputs × {inputs} inputs)",
                        e.message
                    ),
                )
            })
    }

    /// Refuse `what` when it needs more than the memory budget in bytes.
    pub fn check_bytes(&self, what: &str, bytes: Option<u64>) -> Result<()> {
        match bytes {
            Some(b) if b <= self.memory_bytes => Ok(()),
            Some(b) => Err(Error::new(
                crate::error::ErrorKind::Budget,
                format!(
                    "{what} needs {} of memory; the budget is {} (raise it with --budget-gb or the page's settings)",
                    bytes_text(b),
                    bytes_text(self.memory_bytes)
                ),
            )),
            None => Err(Error::new(
                crate::error::ErrorKind::Budget,
                format!(
                    "{what} asks for more memory than can be counted; the budget is {}",
                    bytes_text(self.memory_bytes)
                ),
            )),
        }
    }

    /// Refuse `what` when its estimated operation count exceeds the work
    /// budget (non-finite estimates are refused too).
    pub fn check_work(&self, what: &str, operations: f64) -> Result<()> {
        if operations.is_finite() && operations <= self.work {
            return Ok(());
        }
        Err(Error::new(
            crate::error::ErrorKind::Budget,
            format!(
                "{what} needs about {operations:.1e} operations; the budget is {:.1e} (raise it with --work-budget or the page's settings)",
                self.work
            ),
        ))
    }

    /// Refuse `what` when it needs more memory than the budget (`bytes`,
    /// `None` when its count overflowed) or more work (`operations`).
    /// `size` says in words how big it is ("a beam of 10000 elements,
    /// 20002 DOFs"), and is put in front of either message.
    pub fn check_model(
        &self,
        what: &str,
        size: &str,
        bytes: Option<u64>,
        operations: f64,
    ) -> Result<()> {
        let named = format!("{what} ({size})");
        self.check_bytes(&named, bytes)?;
        self.check_work(&named, operations)
    }

    /// Check that the limits themselves are usable: every budget finite and
    /// above zero. `from` names where they were given (an option, a field).
    pub fn validate(&self, from: &str) -> Result<()> {
        if self.memory_bytes == 0 {
            return Err(Error::usage(format!(
                "{from}: the memory budget is 0; expected a positive size"
            )));
        }
        if !(self.work.is_finite() && self.work >= 1.0) {
            return Err(Error::usage(format!(
                "{from}: the work budget is {}; expected a finite number of operations of 1 or more, e.g. 5e10",
                self.work
            )));
        }
        if self.file_bytes == 0 {
            return Err(Error::usage(format!(
                "{from}: the file-size budget is 0; expected a positive size"
            )));
        }
        Ok(())
    }

    /// These limits with the memory budget set from `--budget-gb` text: a
    /// positive, finite number of gigabytes (10⁹ bytes), e.g. `0.5` or `16`.
    pub fn with_budget_gb(mut self, text: &str) -> Result<Limits> {
        let bad = || {
            Error::usage(format!(
                "--budget-gb '{}': expected a positive number of gigabytes (10^9 bytes), e.g. 4 or 0.5",
                crate::error::quote(text)
            ))
        };
        let gb: f64 = text.trim().parse().map_err(|_| bad())?;
        let bytes = gb * 1e9;
        // at least one kilobyte; at most what a u64 counts
        if !(1e3..1.8e19).contains(&bytes) {
            return Err(bad());
        }
        self.memory_bytes = bytes as u64;
        Ok(self)
    }

    /// These limits with the work budget set from `--work-budget` text: a
    /// finite number of estimated floating-point operations of 1 or more,
    /// e.g. `5e10`.
    pub fn with_work_budget(mut self, text: &str) -> Result<Limits> {
        let ops: f64 = text.trim().parse().map_err(|_| {
            Error::usage(format!(
                "--work-budget '{}': expected a number of operations, e.g. 5e10 (the default) or 1e12",
                crate::error::quote(text)
            ))
        })?;
        if !(ops.is_finite() && ops >= 1.0) {
            return Err(Error::usage(format!(
                "--work-budget '{}': expected a finite number of operations of 1 or more, e.g. 5e10",
                crate::error::quote(text)
            )));
        }
        self.work = ops;
        Ok(self)
    }

    /// Limits from JSON text as the page sends them: any of
    /// `memory_bytes`, `work`, `file_bytes` (the others keep their
    /// defaults; an empty text or `{}` is the defaults); unknown keys and
    /// unusable values (zero, negative, not finite) are refused.
    pub fn from_json(text: &str) -> Result<Limits> {
        let text = if text.trim().is_empty() { "{}" } else { text };
        let l: Limits = serde_json::from_str(text).map_err(|e| {
            Error::usage(format!(
                "limits: {e}; expected {{\"memory_bytes\": N, \"work\": N, \"file_bytes\": N}}, each optional"
            ))
            .field("limits")
        })?;
        l.validate("limits")?;
        Ok(l)
    }

    /// Refuse a file of `len` bytes over the file-size budget.
    pub fn check_file(&self, what: &str, len: u64) -> Result<()> {
        if len <= self.file_bytes {
            return Ok(());
        }
        Err(Error::new(
            crate::error::ErrorKind::Budget,
            format!(
                "{what} is {}; files up to {} are read (raise it with --max-file-mb)",
                bytes_text(len),
                bytes_text(self.file_bytes)
            ),
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::ErrorKind;

    #[test]
    fn a_set_over_budget_names_its_size_and_the_budget() {
        let l = Limits::default();
        // 40 masses on a 1,000,000-line grid: 1e6 × 40 × 40 × 16 B = 25.6 GB
        let e = l
            .check_set("component 'net'", 1_000_000, 40, 40)
            .unwrap_err();
        assert_eq!(e.kind, ErrorKind::Budget);
        assert!(e.message.contains("25.6 GB"), "{}", e.message);
        assert!(e.message.contains("2.1 GB"), "{}", e.message);
        assert!(
            e.message.contains("1000000 lines × 40 outputs × 40 inputs"),
            "{}",
            e.message
        );
        assert!(l.check_set("x", 1000, 40, 40).is_ok());
    }

    #[test]
    fn overflowing_counts_are_refused_not_wrapped() {
        let l = Limits::default();
        assert_eq!(product(&[usize::MAX, 2]), None);
        let e = l.check_set("x", usize::MAX, 2, 2).unwrap_err();
        assert_eq!(e.kind, ErrorKind::Budget);
        assert!(e.message.contains("more memory than can be counted"));
        assert!(l.check_work("x", f64::INFINITY).is_err());
        assert!(l.check_work("x", f64::NAN).is_err());
        assert!(l.check_work("x", 1e9).is_ok());
    }

    #[test]
    fn budgets_from_options_and_json() {
        let l = Limits::default().with_budget_gb("0.5").unwrap();
        assert_eq!(l.memory_bytes, 500_000_000);
        let l = l.with_work_budget("1e12").unwrap();
        assert_eq!(l.work, 1e12);
        for bad in ["0", "-1", "nan", "inf", "lots", "1e300"] {
            let e = Limits::default().with_budget_gb(bad).unwrap_err();
            assert_eq!(e.kind, ErrorKind::Usage, "{bad}");
            assert!(e.message.contains("--budget-gb"), "{e}");
        }
        for bad in ["0", "-5", "nan", "inf", "x"] {
            let e = Limits::default().with_work_budget(bad).unwrap_err();
            assert!(e.message.contains("--work-budget"), "{e}");
        }
        assert_eq!(Limits::from_json("").unwrap(), Limits::default());
        let l = Limits::from_json(r#"{"memory_bytes": 1000000, "work": 1e6}"#).unwrap();
        assert_eq!((l.memory_bytes, l.work), (1_000_000, 1e6));
        assert_eq!(l.file_bytes, Limits::default().file_bytes);
        assert!(Limits::from_json(r#"{"memory": 1}"#).is_err());
        assert!(Limits::from_json(r#"{"work": 0}"#).is_err());
        assert!(Limits::from_json(r#"{"memory_bytes": 0}"#).is_err());
        assert!(Limits::from_json(r#"{"memory_bytes": -3}"#).is_err());
    }

    #[test]
    fn a_model_over_budget_names_its_size() {
        let l = Limits::default();
        let e = l
            .check_model("the beam 'b'", "10000 elements", Some(1 << 40), 1.0)
            .unwrap_err();
        assert!(
            e.message
                .contains("the beam 'b' (10000 elements) needs 1099.5 GB"),
            "{e}"
        );
        let e = l
            .check_model("the beam 'b'", "2000 elements", Some(1), 1e13)
            .unwrap_err();
        assert!(e.message.contains("1.0e13 operations"), "{e}");
        assert!(e.message.contains("--work-budget"), "{e}");
    }

    #[test]
    fn file_budget() {
        let l = Limits {
            file_bytes: 1000,
            ..Limits::default()
        };
        assert!(l.check_file("a.uff", 1000).is_ok());
        let e = l.check_file("a.uff", 1001).unwrap_err();
        assert!(e.message.contains("1 kB"), "{}", e.message);
    }
}
