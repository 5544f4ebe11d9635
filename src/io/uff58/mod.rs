//! Universal File Format dataset 58 (ASCII) and 58b (binary): functions at
//! nodal DOFs.
//!
//! Record layout (the public dataset 58 description, as reproduced in pyuff
//! 2.5.8 `datasets/dataset_58.py`):
//!
//! * start tag `    -1`, then the dataset number `    58` (or `    58b` plus
//!   byte order 1 = little endian / 2 = big endian, floating-point format
//!   2 = IEEE 754, number of ASCII lines 11, number of payload bytes);
//! * records 1–5: ID lines (free text);
//! * record 6: function type, function id, version, load case, response
//!   entity/node/direction, reference entity/node/direction
//!   (`2(I5,I10),2(1X,10A1,I10,I4)`);
//! * record 7: ordinate data type (2 real single, 4 real double, 5 complex
//!   single, 6 complex double), number of points, spacing (0 uneven, 1 even),
//!   abscissa minimum, increment, z value (`3I10,3E13.5`);
//! * records 8–11: data characteristics of abscissa, ordinate numerator,
//!   ordinate denominator, z axis: specific data type, length/force/temperature
//!   exponents, axis label, units label (`I10,3I5,2(1X,20A1)`);
//! * record 12: the values (ASCII in the layout's columns, or for 58b raw IEEE
//!   numbers right after the last header line), then the end tag `    -1`.
//!
//! Reading is tolerant where files in the field differ: numbers in data
//! records are read as blank-separated tokens, falling back to the layout's
//! fixed columns when numbers touch; header records are read by column,
//! falling back to blank-separated fields. Every error names the file, the
//! line (ASCII, 1-based) or byte (binary payload, 0-based), the field and what
//! was expected.
//!
//! ## Writing and exactness
//! Binary 58b output is double precision little endian: bit-exact.
//! The layout's ASCII columns are 20 characters for double-precision values
//! and 13 for abscissa values and the even-grid minimum and increment. A
//! double needs up to 17 significant digits (24 characters) to round-trip, so
//! it cannot always fit. [`AsciiLayout::Standard`] (used by [`write()`]) keeps
//! the columns, so column-based readers such as pyuff read the file: each
//! number is written with its shortest round-trip text when that fits its
//! column (then it is bit-exact), otherwise with as many significant digits
//! as fit with a blank before each number. Ordinates (20 columns) keep at
//! least 13 significant digits while the decimal exponent has at most two
//! digits (relative error ≤ 5e-13; 14 digits for |exponent| < 10, 12 beyond
//! 1e±99). Uneven abscissa values (13 columns) keep at least 10 significant
//! digits from 0.1 Hz to 1e10 Hz (relative error ≤ 5e-10). An even grid is
//! written as minimum and increment only when both are exact in 13 columns
//! and `min + k·inc` reproduces every line; otherwise the grid is uneven. [`AsciiLayout::Exact`] (via [`write_with`]) writes
//! every number with its shortest round-trip text in 26-character fields,
//! three to a 78-column line: bit-exact, readable by blank-separated readers
//! (and by mortise), but not by readers that insist on the 20-column fields.

//!
//! ## What mortise writes
//! One dataset per present entry: function type 4 for FRFs; 12 for peak or
//! RMS spectra, 2 for autopower, 9 for PSD, 10 for ESD, 3 for cross spectra
//! (the reference DOF in record 6); 6 for coherence after its FRF.
//! Double precision, SI units labels (records 9 and 10), specific data types
//! 8/11/12 (motion), 9 (force response) / 13 (excitation force), 15
//! (pressure), 18 (frequency). ID line 1 holds the set name, ID line 2 the
//! FRF kind, `coherence` or `signal=<kind>` (so our own spectra read back as
//! peak or RMS without the usual warning), followed by ` set=<n>` (n = 1, 2,
//! ... in the order written) when the file holds more than one set; ID lines
//! 3-5 the provenance chain ([`provenance_lines`]). The record-6 entity names
//! hold the DOF component when it fits 10 columns; [`read_with`] with no
//! component given restores it. A set without any present entry cannot be
//! written (it would vanish from the file) and is refused.
//!
//! ## How datasets are grouped into sets
//! A UFF file has no set record, so the reader groups datasets:
//! * datasets whose ID line 2 is exactly mortise's own text with a set tag
//!   (`<kind> set=<n>`, `signal=<kind> set=<n>`, `coherence set=<n>`) form
//!   one set per tag and ID line 1 (the set name), so several sets written
//!   to one file come back as those sets, even when they share DOFs, grid
//!   and quantities; files joined byte for byte keep their sets apart when
//!   the names differ;
//! * every other dataset (other writers' files, and our files of one set)
//!   is grouped by function (FRF or the spectrum kind), quantity pair and
//!   frequency grid, whatever its ID lines say: one FRF matrix exported as
//!   many datasets, one per response/reference pair with its own ID text,
//!   reads as one set, with missing entries where no dataset gives one;
//! * coherence (function type 6) joins the FRF of the same DOFs and grid in
//!   the same group.
//!
//! One set spread over several files (a roving-hammer delivery) is read file
//! by file and joined by [`super::merge`].
//!
//! ## Function types and what the file does not say
//! Read: 4 (FRF), 5 (transmissibility: output and input of one quantity),
//! 6 (coherence), 2 (auto spectrum), 3 (cross spectrum: the reference DOF
//! is the set's one input, values in output unit × reference unit),
//! 9 (PSD), 10 (ESD), 12 (spectrum) and 0 (general) when records 9 and 10
//! tell the quantities (a ratio label: an FRF; a unit, its square or its
//! square per Hz: a spectrum). Time responses (1) are read by
//! [`read_overridden`] into a separate list of [`TimeHistory`] (abscissa
//! code 17, a time unit), never into a set: their abscissa is time and must
//! never become a frequency grid; the plain readers skip them (and refuse a
//! file of time data alone, by name). Other types are skipped with a remark.
//!
//! Quantities come from the specific data types and the units labels of
//! records 9 and 10 together: a ratio label in record 9 (`(1/N)*(m/s²)`,
//! `g/lbf`) gives both sides; a code and a label that disagree are read as
//! the label says, with a warning naming both. When neither tells, the read
//! is refused naming the import options `out_qty` / `in_qty` ([`Overrides`]),
//! which are refused in turn when no dataset needs them. An amplitude
//! spectral density label (`m/s/√Hz`) is read as a PSD of the squared values.
//!
//! Datasets with node 0 and direction 0 on both sides carry no DOFs: they
//! get the placeholders of [`unnumbered_dofs`] (distinct, so never a driving
//! point) until the `dofs` import option assigns them. Datasets repeating a
//! DOF pair of their group (several runs of one channel) are all kept: run k
//! is the k-th dataset of each pair, a set named `<name> run <k>`.
//!
//! Header text (records 1-11) that is not UTF-8 is read as Latin-1
//! (Windows-1252 for the characters units use) by the CSV readers' decoder,
//! reported once per file.
//!
//! ## Spectrum kinds
//! Function type 2 is an autopower and 9 a PSD; type 12 does not say peak or
//! RMS. The kind the caller declares ([`read_declared`], from
//! [`super::ImportOptions::signal`]) decides for type 12; undeclared, our own
//! `signal=` marker decides, else the spectrum is read as peak with a
//! warning. A declaration that contradicts type 2 or 9 or our marker is
//! refused, naming both.
//!
//! ## Files
//! One job a file: `records.rs` the record as it stands in a file and the
//! names of its codes; `text.rs` lines, numbers and columns of the text;
//! `scan.rs` a file into datasets (detection, start and end tags);
//! `parse.rs` one dataset 58 / 58b into a [`Dataset58`]; `payload.rs` 58b
//! numbers, and an even 58b dataset's values left in the file until its
//! set is built; `convert.rs` the layout's codes and units labels to and
//! from mortise's quantities and SI; `group.rs` datasets into FRF sets (the
//! readers); `fill.rs` a set's line-major matrix from its datasets' values; `provenance.rs` the
//! provenance chain in ID lines 3-5; `write.rs` the writers.
//!
//! ## Datasets besides 58
//! `scan.rs` also reads 151 (header, `header151.rs`), 164 (units,
//! `units164.rs`: applied to the datasets after it, including unlabelled
//! dataset 58 axes through `units164::apply_to_58`), 15 / 2411 / 18 / 2420 /
//! 82 (geometry in global metres, `geometry.rs`) and 55 (modes into a
//! modal model, `modal55.rs`); `block.rs` holds their record readers and
//! `extras.rs` gathers them ([`read_extras`]) and writes 2411 and 55.

mod block;
mod convert;
mod extras;
mod fill;
mod geometry;
mod group;
mod header151;
mod modal55;
mod parse;
mod payload;
mod provenance;
mod records;
mod scan;
mod segments;
mod text;
mod units164;
mod write;

pub use extras::{read_extras, write_2411, write_55, UffExtras, UffExtrasSummary};
pub use geometry::{CoordSystem, Geometry, GeometrySummary, Node, TraceLine};
pub use group::{
    read, read_all, read_declared, read_declared_with_limits, read_overridden, read_with,
    unnumbered_dofs, DofAssignment, Overrides, UffAll, UffRead,
};
pub use header151::Header151;
pub use modal55::ModeSummary;
pub use provenance::{provenance_from_lines, provenance_lines};
pub use records::{function_type_name, AsciiLayout, AxisInfo, Dataset58, Layout, TimeHistory};
pub use scan::{looks_like_uff, parse_datasets, PROGRESS_STEP};
pub use units164::{units_code_name, UnitSystem};
pub use write::{datasets_of, shortest, write, write_dataset, write_with};
