//! Typed errors. Every error that comes from a file or a user names, where it
//! can, the file, the place in it (line for text, byte offset for binary),
//! the field, and what was expected.

use std::fmt;

/// What went wrong, coarsely, so callers can react without parsing text.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ErrorKind {
    /// The bytes or text do not follow the expected layout.
    Parse,
    /// A unit string is unknown or does not fit the quantity.
    Unit,
    /// A DOF label is malformed, missing or duplicated.
    Dof,
    /// Frequency grids are not increasing, do not overlap, or would need extrapolation.
    Grid,
    /// Quantities or FRF kinds do not fit an operation.
    Quantity,
    /// A value is NaN or infinite, or a matrix is singular.
    Numeric,
    /// A matrix entry needed by an operation is missing.
    Missing,
    /// A recipe entry is wrong.
    Recipe,
    /// The file format is not recognised or not supported.
    Unsupported,
    /// Reading or writing failed at the operating-system level.
    Io,
    /// Command-line usage.
    Usage,
    /// The user cancelled a long computation.
    Cancelled,
    /// The input asks for more memory, time or file size than the budget
    /// allows (`crate::limits`); the message names the size asked for, the
    /// budget and how to raise it.
    Budget,
    /// A defect of mortise itself, not of the input (exit code 3).
    Internal,
}

/// Where in a file an error sits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Location {
    /// 1-based line number in a text file.
    Line(usize),
    /// 0-based byte offset in a binary file.
    Byte(usize),
}

/// The one error type of mortise.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Error {
    pub kind: ErrorKind,
    /// File name as the user gave it (or the recipe entry / component name).
    pub file: Option<String>,
    pub location: Option<Location>,
    /// The field or column concerned, e.g. "record 6, reference direction".
    pub field: Option<String>,
    /// Where in a recipe (or other nested input) the error sits, innermost
    /// first: `["joints[1].a", "steps[2] (id 'mounted', op 'couple')", "variants ('softer')"]`.
    /// Displayed outer to inner.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub context: Vec<String>,
    /// What was expected and what was found, in words.
    pub message: String,
}

pub type Result<T> = std::result::Result<T, Error>;

impl Error {
    pub fn new(kind: ErrorKind, message: impl Into<String>) -> Self {
        Error {
            kind,
            file: None,
            location: None,
            field: None,
            context: Vec::new(),
            message: message.into(),
        }
    }
    pub fn parse(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Parse, message)
    }
    pub fn unit(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Unit, message)
    }
    pub fn dof(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Dof, message)
    }
    pub fn grid(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Grid, message)
    }
    pub fn quantity(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Quantity, message)
    }
    pub fn numeric(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Numeric, message)
    }
    pub fn missing(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Missing, message)
    }
    pub fn recipe(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Recipe, message)
    }
    pub fn unsupported(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Unsupported, message)
    }
    pub fn usage(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Usage, message)
    }
    pub fn io(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Io, message)
    }
    /// Attach a file name (keeps an existing one).
    pub fn in_file(mut self, file: impl Into<String>) -> Self {
        if self.file.is_none() {
            self.file = Some(file.into());
        }
        self
    }
    /// Attach a 1-based line number (keeps an existing location).
    pub fn at_line(mut self, line: usize) -> Self {
        if self.location.is_none() {
            self.location = Some(Location::Line(line));
        }
        self
    }
    /// Attach a 0-based byte offset (keeps an existing location).
    pub fn at_byte(mut self, offset: usize) -> Self {
        if self.location.is_none() {
            self.location = Some(Location::Byte(offset));
        }
        self
    }
    pub fn internal(message: impl Into<String>) -> Self {
        Self::new(ErrorKind::Internal, message)
    }
    /// Wrap the error in one more level of context (an enclosing recipe entry):
    /// contexts stack, the outermost is added last and shown first.
    pub fn within(mut self, context: impl Into<String>) -> Self {
        self.context.push(context.into());
        self
    }
    /// The recipe path of the error, outer to inner, joined by " → ".
    pub fn context_path(&self) -> String {
        self.context
            .iter()
            .rev()
            .cloned()
            .collect::<Vec<_>>()
            .join(" → ")
    }
    /// Attach a field name (keeps an existing one).
    pub fn field(mut self, field: impl Into<String>) -> Self {
        if self.field.is_none() {
            self.field = Some(field.into());
        }
        self
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut wrote = false;
        if let Some(file) = &self.file {
            write!(f, "{file}")?;
            wrote = true;
        }
        if let Some(loc) = &self.location {
            if wrote {
                write!(f, ": ")?;
            }
            match loc {
                Location::Line(n) => write!(f, "line {n}")?,
                Location::Byte(n) => write!(f, "byte {n}")?,
            }
            wrote = true;
        }
        for c in self.context.iter().rev() {
            if wrote {
                write!(f, ": ")?;
            }
            write!(f, "{c}")?;
            wrote = true;
        }
        if let Some(field) = &self.field {
            if wrote {
                write!(f, ": ")?;
            }
            write!(f, "{field}")?;
            wrote = true;
        }
        if wrote {
            write!(f, ": ")?;
        }
        write!(f, "{}", self.message)
    }
}

impl std::error::Error for Error {}

/// The longest piece of input an error message quotes, in characters.
pub const QUOTE_CHARS: usize = 60;

/// Input as an error message may quote it: at most [`QUOTE_CHARS`]
/// characters, cut with "…" and the full length in characters, and control
/// characters shown as escapes, so a 1 MB token or a label full of terminal
/// escapes never floods or garbles a message.
pub fn quote(text: &str) -> String {
    quote_upto(text, QUOTE_CHARS)
}

/// [`quote`] with another length: for messages of other libraries (a JSON
/// parser's) that may carry input, cut at `max` characters.
pub fn quote_upto(text: &str, max: usize) -> String {
    let mut out = String::new();
    for (n, c) in text.chars().enumerate() {
        if n == max {
            let total = text.chars().count();
            return format!("{out}… ({total} characters)");
        }
        if c.is_control() {
            out.extend(c.escape_default());
        } else {
            out.push(c);
        }
    }
    out
}

impl From<std::io::Error> for Error {
    fn from(e: std::io::Error) -> Self {
        Error::io(e.to_string())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn message_names_file_line_field() {
        let e = Error::parse("expected an integer, found 'abc'")
            .field("record 7, number of values")
            .at_line(12)
            .in_file("casing.uff");
        assert_eq!(
            e.to_string(),
            "casing.uff: line 12: record 7, number of values: expected an integer, found 'abc'"
        );
    }

    #[test]
    fn context_stacks_outer_to_inner() {
        let e = Error::dof("no DOF 'B:9+X' in 'B'")
            .field("b")
            .within("joints[1]")
            .within("steps[2] (id 'mounted', op 'couple')")
            .within("variants[0] ('softer')")
            .in_file("r.json");
        assert_eq!(
            e.to_string(),
            "r.json: variants[0] ('softer'): steps[2] (id 'mounted', op 'couple'): joints[1]: b: no DOF 'B:9+X' in 'B'"
        );
        assert_eq!(
            e.context_path(),
            "variants[0] ('softer') → steps[2] (id 'mounted', op 'couple') → joints[1]"
        );
    }

    #[test]
    fn first_context_wins() {
        let e = Error::parse("x")
            .in_file("a")
            .in_file("b")
            .at_byte(4)
            .at_line(9);
        assert_eq!(e.to_string(), "a: byte 4: x");
    }

    #[test]
    fn quote_cuts_long_input_and_escapes_controls() {
        assert_eq!(quote("casing:101+Z"), "casing:101+Z");
        let long = "x".repeat(1_000_000);
        let q = quote(&long);
        assert!(q.len() < 100, "{q}");
        assert!(q.ends_with("… (1000000 characters)"), "{q}");
        assert_eq!(quote("a\u{1b}[2Jb"), "a\\u{1b}[2Jb");
        // cut on characters, not bytes: no panic inside a multi-byte character
        let wide = "é".repeat(100);
        assert!(quote(&wide).starts_with(&"é".repeat(QUOTE_CHARS)));
    }
}
