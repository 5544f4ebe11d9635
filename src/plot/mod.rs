//! Drawing of FRF plots, generic over a plotters
//! [`DrawingBackend`](plotters::prelude::DrawingBackend).
//!
//! The same code draws the page's plots (SVG text rendered in the page's
//! worker) and the exported SVG files. Axes, ticks and legends are laid out
//! here in pixels, so no font metrics from the backend are needed (a Web
//! Worker has no DOM to measure text with).
//!
//! A plot is described by a [`PlotSpec`] (JSON on the page). The drawing
//! returns one [`Frame`] per panel: its pixel rectangle and axis ranges, so
//! the page can map a pointer position to a frequency (cursor readout, zoom,
//! pan) and ask [`probe`] for the values there.
//!
//! # Files
//! One job a file: `spec.rs` the description ([`PlotSpec`] and its parts)
//! and the [`Frame`]s a drawing returns; `data.rs` what a spec shows, taken
//! from the sets (curves with their dB levels, lines with x from a set, bars
//! from a set or a report's path ranking); `layout.rs` axis ranges, ticks and
//! panels in pixels, and clipping (no backend calls); `draw.rs` the drawing
//! primitives over a backend (colours, text, dashed strokes, axes, legends,
//! curves); `render.rs` each kind of plot laid out and drawn ([`draw`],
//! [`render_svg`]); `probe.rs` the cursor readout ([`probe`]);
//! `geometry.rs` a file's nodes in three views ([`geometry_svg`]);
//! `diagram.rs` the assembly a recipe describes, components, joints and
//! steps, with the box of every clickable part ([`assembly_svg`]).

mod data;
mod diagram;
mod draw;
mod drawing;
mod geometry;
mod layout;
mod probe;
mod render;
mod spec;
mod stabilization;
mod vpt_geometry;

#[cfg(test)]
mod fixtures;

pub use data::db_reference;
pub use diagram::{assembly_svg, Diagram, DiagramItem, MAX_DRAWN};
pub use draw::{DASHES, PALETTE};
pub use drawing::Drawing;
pub use geometry::geometry_svg;
pub use layout::tick_text;
pub use probe::{probe, Probe};
pub use render::{draw, render_svg};
pub use spec::{BarGroup, Controls, Frame, LineData, PlotKind, PlotSpec, SeriesRef};
pub use stabilization::{stabilization_svg, PoleClass};
pub use vpt_geometry::vpt_geometry_svg;
