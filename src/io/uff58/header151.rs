//! Dataset 151 (header): model name, description, the application that
//! made the database, dates, and the program that wrote the file. Read as
//! provenance, shown by `inspect` and in the file summary; it changes no
//! value.
//!
//! Layout (the public dataset 151 description, as reproduced in pyuff 2.5.8
//! `datasets/dataset_151.py`): record 1 model name, 2 model file
//! description, 3 application that created the model file (80A1 each);
//! record 4 date and time created (10A1, 10A1, then version and file type
//! numbers); record 5 date and time last saved; record 6 the program that
//! wrote the universal file; record 7 date and time it was written. Records
//! 4 to 7 are optional here (some writers stop after record 3).

use super::block::Block;
use crate::error::Result;

/// A file header (dataset 151).
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct Header151 {
    pub model: String,
    pub description: String,
    pub application: String,
    pub created: String,
    pub saved: String,
    pub program: String,
    pub written: String,
    /// 1-based line of the dataset's start tag.
    pub line: usize,
}

impl Header151 {
    /// One line for `inspect`.
    pub fn describe(&self) -> String {
        let mut parts = vec![format!("model '{}'", crate::error::quote(&self.model))];
        for (k, v) in [
            ("description", &self.description),
            ("application", &self.application),
            ("created", &self.created),
            ("saved", &self.saved),
            ("program", &self.program),
            ("written", &self.written),
        ] {
            if !v.is_empty() {
                parts.push(format!("{k} '{}'", crate::error::quote(v)));
            }
        }
        format!(
            "header (dataset 151, line {}): {}",
            self.line,
            parts.join(", ")
        )
    }
}

fn date_time(b: &Block, i: usize) -> String {
    match b.lines.get(i) {
        Some((_, t)) => {
            let d: String = t.chars().take(10).collect();
            let h: String = t.chars().skip(10).take(10).collect();
            format!("{} {}", d.trim(), h.trim()).trim().to_string()
        }
        None => String::new(),
    }
}

/// Read one dataset 151.
pub(super) fn parse_151(b: &Block) -> Result<Header151> {
    Ok(Header151 {
        model: b.text(0, "record 1 (model name)")?,
        description: b.text(1, "record 2 (model file description)")?,
        application: b.text(2, "record 3 (application that created the model)")?,
        created: date_time(b, 3),
        saved: date_time(b, 4),
        program: b
            .lines
            .get(5)
            .map(|l| l.1.trim().to_string())
            .unwrap_or_default(),
        written: date_time(b, 6),
        line: b.start,
    })
}
