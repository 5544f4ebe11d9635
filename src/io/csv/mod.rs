//! Delimited text: mortise's own self-describing CSV layout, and suppliers'
//! CSV/TSV files read through a [`ColumnMap`].
//!
//! # The mortise FRF table (our own layout, version 1)
//!
//! A file holds one or more blocks, one per [`FrfSet`](crate::frf::FrfSet).
//! A block is a run of header comment lines, one column-header row, then one
//! data row per frequency line. Values are always SI (see [`crate::units`]);
//! numbers are written with the shortest text that reads back to the same
//! f64, so reading a written file reproduces every value bit for bit.
//!
//! ```text
//! # mortise-frf 1
//! # name: wall
//! # out-quantity: acceleration
//! # in-quantity: force
//! # units: SI
//! # output: wall:A1+Z
//! # output: wall:A2+Z
//! # input: wall:A1+Z
//! # missing: 2 1 (wall:A2+Z / wall:A1+Z)
//! # coherence: yes
//! freq_Hz,re wall:A1+Z/wall:A1+Z,im wall:A1+Z/wall:A1+Z,coh wall:A1+Z/wall:A1+Z
//! 10,0.0125,-3.5e-5,0.998
//! 12.5,0.0131,-4.25e-5,
//! ```
//!
//! Header lines, in this order, each `# key: value`:
//! * `mortise-frf 1`: the magic line and layout version (first line of a block);
//! * `name`: the set name;
//! * `out-quantity`, `in-quantity`: [`Quantity`](crate::units::Quantity) names (`displacement`,
//!   `velocity`, `acceleration`, `force`, `pressure`, `volume-velocity`,
//!   `dimensionless`);
//! * `units: SI`: values are in SI (m, m/s, m/s², N; rad and N·m on
//!   rotational DOFs; Pa; m³/s);
//! * `signal`: only for spectra: `peak`, `rms`, `autopower` or `psd`;
//! * `output`, `input`: one line per DOF in matrix order, in the text form
//!   `component:node+Z` (or `output-json`/`input-json` with the DOF as JSON
//!   when the text form would not read back the same);
//! * `missing`: one line per missing entry, 1-based output and input index
//!   (the labels in brackets are for the reader); missing entries have no
//!   columns;
//! * `coherence: yes` when every present entry has a coherence column (an
//!   empty cell is a line without coherence);
//! * `provenance` (JSON object) and `warning` (text), zero or more lines each.
//!
//! Text values escape backslash, newline and carriage return as `\\`, `\n`,
//! `\r`. The column-header row is `freq_Hz`, then for every present entry in
//! row-major order `re OUT/IN`, `im OUT/IN` (and `coh OUT/IN`); cells holding
//! a comma or a quote are quoted. Reading checks every label against the
//! header lines.
//!
//! # Supplier files
//!
//! [`read_mapped`] reads any delimited text through a [`ColumnMap`] that
//! names the frequency column, and for each FRF its DOFs and value columns
//! (real/imaginary, magnitude/phase with magnitude linear or in dB, or one
//! real value), the value unit (converted to SI with
//! [`crate::units::ratio_factor`]) and the quantities. [`preview`] splits the
//! first rows into cells and shows the values the map gives, for the page's
//! import dialog.
//!
//! # Files
//! One job a file: `native.rs` our own layout (read and write);
//! `column_map.rs` the [`ColumnMap`] and its JSON form; `mapped.rs` reading a
//! supplier file through a map (and [`looks_delimited`]); `preview.rs` the
//! import dialog's preview; `text.rs` the text helpers both layouts share.

mod auto;
mod column_map;
mod mapped;
mod native;
mod preview;
mod text;
mod time_mapped;

pub use auto::{detect_map, Detected};
pub use column_map::{
    map_from_json, ColumnMap, ColumnRef, Delimiter, FreqUnit, MagScale, MapEntry, PhaseUnit,
    ValueColumns,
};
pub use mapped::{looks_delimited, read_mapped, read_mapped_as, read_mapped_with_limits};
pub use native::{
    is_native, read_native, read_native_with_limits, write_native, NATIVE_MAGIC, NATIVE_VERSION,
};
pub use preview::{preview, preview_as, same_layout, Preview, PreviewRow, PreviewValues};
pub use text::{decode_text, fmt_f64, text_lines};
pub use time_mapped::{read_time_mapped, TimeChannelMap, TimeColumnMap};
