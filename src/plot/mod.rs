//! Drawing of FRF plots, generic over a plotters
//! [`DrawingBackend`](plotters::prelude::DrawingBackend).
//!
//! The same code draws the page's interactive plot (on a `<canvas>`, through
//! [`Canvas`], a plotters-canvas backend, in the page's main-thread wasm
//! instance) and every SVG (the export, the CLI's and the import preview's).
//! Axes, ticks and legends are laid out here in pixels, so no font metrics
//! from the backend are needed.
//!
//! A plot is described by a [`PlotSpec`] (JSON on the page). It is resolved
//! against the sets ([`PlotData::resolve`], in the page's worker, which holds
//! the sets) and drawn with a [`View`] (switches and zoom) by [`draw_data`];
//! [`draw`] and [`render_svg`] do both in one step. A drawing returns one
//! [`Frame`] per panel, its pixel rectangle and axis ranges, so the page can
//! map a pointer position to a frequency (cursor readout, zoom, pan) and
//! ask [`probe_data`] for the values there.
//!
//! # Files
//! One job a file: `spec.rs` the description ([`PlotSpec`] and its parts)
//! and the [`Frame`]s a drawing returns; `data.rs` what a spec shows, taken
//! from the sets (curves with their dB levels, lines with x from a set, bars
//! from a set or a report's path ranking); `layout.rs` axis ranges, ticks and
//! panels in pixels, and clipping (no backend calls); `draw.rs` the drawing
//! primitives over a backend (colours, text, dashed strokes, axes, legends,
//! curves); `envelope.rs` the per-pixel-column decimation of long curves
//! (min/max envelope: no peak lost); `simplify.rs` the points a stroke
//! cannot show left out (within 0.3 px of the drawn line); `render.rs` each kind of plot laid out
//! and drawn ([`draw_data`], [`draw`], [`render_svg`]); `resolved.rs` the
//! resolved data a redraw needs ([`PlotData`], [`View`], and its parts for
//! crossing between wasm instances); `probe.rs` the cursor readouts
//! ([`probe`], [`probe_data`], [`step_line`], [`nearest_point`]);
//! `canvas.rs` (wasm only) the canvas backend ([`Canvas`]);
//! `geometry.rs` a file's nodes in three views ([`geometry_svg`]);
//! `diagram.rs` the assembly a recipe describes, components, joints and
//! steps, with the box of every clickable part ([`assembly_svg`]).

mod band;
#[cfg(target_arch = "wasm32")]
mod canvas;
mod data;
mod diagram;
mod draw;
mod drawing;
mod envelope;
mod geometry;
mod layout;
mod map;
mod probe;
mod render;
mod resolved;
mod simplify;
mod spec;
mod stabilization;
pub mod time_view;
mod vpt_consistency;
mod vpt_geometry;

#[cfg(test)]
mod fixtures;

#[cfg(target_arch = "wasm32")]
pub use canvas::Canvas;
pub use data::{db_reference, Bands};
pub use diagram::{assembly_svg, Diagram, DiagramItem, MAX_DRAWN};
pub use draw::{DASHES, LEGEND_INSIDE_MAX, PALETTE};
pub use drawing::Drawing;
pub use geometry::geometry_svg;
pub use layout::tick_text;
pub use probe::{frame_px, nearest_point, probe, probe_data, step_line, Probe};
pub use render::{
    check_size, draw, draw_data, draw_data_pass, render_data_svg, render_svg, Drawn, Pass,
};
pub use resolved::{CurveMeta, PlotData, PlotMeta, PlotParts, View};
pub use spec::{
    BarGroup, Controls, Frame, LegendEntry, LineData, MapCell, PlotKind, PlotSpec, SeriesRef,
};
pub use stabilization::{
    stabilization_drawing, stabilization_svg, ChartDrawing, PoleClass, PoleMark,
};
pub use vpt_consistency::{step_virtual_points, vpt_consistency_svgs};
pub use vpt_geometry::vpt_geometry_svg;
