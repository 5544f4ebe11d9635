//! The speed map: a speed sweep's line levels as colour, frequency across
//! and speed up. Each order k at speed s is a cell at (k·s Hz, s), coloured
//! by its level at the chosen target, with a colour scale beside the panel.
//! The worst speed (the highest overall level) is marked.
//!
//! The cells come from a run report's `sweep` (kept as JSON in the spec, as
//! a path ranking is; null levels are orders left out at that speed):
//! [`cells_from_sweep`] resolves them once, the drawing reads the resolved
//! cells only.
//!
//! Not here: the sweep itself (`crate::recipe::sweep`).

use super::draw::{axes, derr, text};
use super::layout::{finite_range, y_axis, Axis, Panel};
use super::spec::{Frame, MapCell, PlotSpec};
use crate::error::{Error, Result};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// The sequential colour scale, low to high: dark blue through teal and
/// green to pale yellow (monotonic in lightness, so the order of levels
/// reads in grey too; our own stops).
const SCALE: [(u8, u8, u8); 5] = [
    (38, 30, 92),
    (33, 98, 140),
    (30, 150, 130),
    (122, 196, 86),
    (246, 230, 120),
];

/// The colour of `t` in 0..=1 on [`SCALE`].
pub(super) fn scale_colour(t: f64) -> RGBColor {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let x = t * (SCALE.len() - 1) as f64;
    let i = (x.floor() as usize).min(SCALE.len() - 2);
    let f = x - i as f64;
    let (a, b) = (SCALE[i], SCALE[i + 1]);
    let mix = |p: u8, q: u8| (p as f64 + (q as f64 - p as f64) * f).round() as u8;
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

fn num(v: &serde_json::Value) -> Option<f64> {
    v.as_f64().filter(|x| x.is_finite())
}

/// The cells of a report's speed sweep at target column `column`: for
/// every row (speed) and order with a level, (k·s, s, level). Refused: a
/// sweep without orders (not a speed sweep), a column it does not have.
pub(super) fn cells_from_sweep(
    sweep: &serde_json::Value,
    column: usize,
) -> Result<(Vec<MapCell>, String, String)> {
    let bad = |what: &str| {
        Error::usage(format!(
            "speed map: expected a speed sweep from a run report ({what})"
        ))
        .field("sweep")
    };
    let orders: Vec<f64> = sweep["orders"]
        .as_array()
        .ok_or_else(|| bad("no orders: the sweep is not over speed"))?
        .iter()
        .map(|o| num(o).ok_or_else(|| bad("an order is not a number")))
        .collect::<Result<_>>()?;
    if orders.is_empty() {
        return Err(bad("no orders: the sweep is not over speed"));
    }
    let columns = sweep["columns"]
        .as_array()
        .ok_or_else(|| bad("no columns"))?;
    let col = columns.get(column).ok_or_else(|| {
        Error::usage(format!(
            "speed map: target {column} of {} the sweep has",
            columns.len()
        ))
        .field("map_column")
    })?;
    let label = format!(
        "{} at {}",
        col["step"].as_str().unwrap_or("?"),
        col["dof"].as_str().unwrap_or("?")
    );
    let unit = col["unit"].as_str().unwrap_or("dB").to_string();
    let nc = columns.len();
    let mut cells = Vec::new();
    for row in sweep["rows"].as_array().ok_or_else(|| bad("no rows"))? {
        let speed = row["value"]
            .as_str()
            .and_then(|t| t.parse::<f64>().ok())
            .filter(|s| s.is_finite())
            .ok_or_else(|| bad("a row's speed is not a number"))?;
        let map = row["map_db"]
            .as_array()
            .ok_or_else(|| bad("a row has no map"))?;
        for (o, k) in orders.iter().enumerate() {
            if let Some(level) = map.get(o * nc + column).and_then(num) {
                cells.push(MapCell {
                    freq: k * speed,
                    speed,
                    level,
                });
            }
        }
    }
    if cells.is_empty() {
        return Err(Error::missing("speed map: the sweep has no line levels"));
    }
    Ok((cells, label, unit))
}

/// Draw the map of `spec.cells` in the rectangle, the colour scale at its
/// right, the worst speed marked.
pub(super) fn draw_map<DB: DrawingBackend>(
    b: &mut DB,
    spec: &PlotSpec,
    (left, top, right, bottom): (i32, i32, i32, i32),
) -> Result<Vec<Frame>> {
    let cells = &spec.cells;
    if cells.is_empty() {
        return Err(Error::missing("nothing to plot: no speed sweep given"));
    }
    let (f0, f1) = match spec.x_range {
        Some([a, c]) if a < c => (a, c),
        _ => finite_range(cells.iter().map(|c| c.freq), spec.x_log)
            .ok_or_else(|| Error::missing("nothing to plot: no frequencies"))?,
    };
    let x = Axis {
        min: f0,
        max: if f1 > f0 { f1 } else { f0 + 1.0 },
        log: spec.x_log,
    };
    let y = y_axis(
        spec.y_range,
        cells.iter().map(|c| c.speed).collect(),
        false,
        false,
    );
    let scale_w = 70;
    let p = Panel {
        x0: left,
        y0: top,
        x1: right - scale_w,
        y1: bottom,
        x,
        y,
    };
    axes(
        b,
        &p,
        Some("frequency of the order's line (Hz)"),
        &spec.y_label,
        None,
        true,
    )?;
    let levels: Vec<f64> = cells.iter().map(|c| c.level).collect();
    let (lo, hi) = finite_range(levels.iter().copied(), false).unwrap_or((0.0, 1.0));
    // the scale spans 40 dB below the highest level at most
    let lo = lo.max(hi - 40.0);
    let span = if hi > lo { hi - lo } else { 1.0 };
    // cell size: the speed step in pixels, at least 3 px
    let mut speeds: Vec<f64> = cells.iter().map(|c| c.speed).collect();
    speeds.sort_by(|a, b| a.total_cmp(b));
    speeds.dedup();
    let step_px = speeds
        .windows(2)
        .map(|w| (p.px(f0, w[0]).1 - p.px(f0, w[1]).1).abs())
        .fold(f64::INFINITY, f64::min);
    let half = if step_px.is_finite() {
        (step_px / 2.0).clamp(1.5, 8.0)
    } else {
        4.0
    };
    // low levels first, so the loud cells are on top
    let mut order: Vec<usize> = (0..cells.len()).collect();
    order.sort_by(|&a, &c| cells[a].level.total_cmp(&cells[c].level));
    for i in order {
        let c = &cells[i];
        if !(c.freq >= p.x.min && c.freq <= p.x.max && c.speed >= p.y.min && c.speed <= p.y.max) {
            continue;
        }
        let (px, py) = p.px(c.freq, c.speed);
        let colour = scale_colour((c.level - lo) / span);
        let (a, z) = (
            ((px - half).round() as i32, (py - half).round() as i32),
            ((px + half).round() as i32, (py + half).round() as i32),
        );
        b.draw_rect(a, z, &colour, true).map_err(derr)?;
    }
    // the worst speed: a dashed line across, named
    if let Some(w) = spec.worst_speed.filter(|s| *s >= p.y.min && *s <= p.y.max) {
        let y = p.px(f0, w).1.round() as i32;
        let ink = RGBColor(200, 40, 40);
        let mut x0 = p.x0;
        while x0 < p.x1 {
            let x1 = (x0 + 8).min(p.x1);
            b.draw_line((x0, y), (x1, y), &ink).map_err(derr)?;
            x0 += 14;
        }
        text(
            b,
            &format!("loudest: {} rev/s", super::layout::tick_text(w)),
            (p.x0 + 6, y - 4),
            12.0,
            Pos::new(HPos::Left, VPos::Bottom),
            false,
        )?;
    }
    // the colour scale
    let (sx0, sx1) = (right - scale_w + 18, right - scale_w + 34);
    let n = 64;
    for k in 0..n {
        let ya = bottom - (bottom - top) * k / n;
        let yb = bottom - (bottom - top) * (k + 1) / n;
        let t = (k as f64 + 0.5) / n as f64;
        b.draw_rect((sx0, yb), (sx1, ya), &scale_colour(t), true)
            .map_err(derr)?;
    }
    for k in 0..=4 {
        let v = lo + span * k as f64 / 4.0;
        let yy = bottom - ((bottom - top) as f64 * k as f64 / 4.0).round() as i32;
        text(
            b,
            &format!("{v:.0}"),
            (sx1 + 4, yy),
            11.0,
            Pos::new(HPos::Left, VPos::Center),
            false,
        )?;
    }
    text(
        b,
        &spec.z_label,
        (right, top - 4),
        11.0,
        Pos::new(HPos::Right, VPos::Bottom),
        false,
    )?;
    Ok(vec![p.frame("frequency")])
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn cells_are_orders_times_speed_and_nulls_are_left_out() {
        let sweep = json!({
            "orders": [1.0, 2.0],
            "columns": [{"step": "s", "dof": "a", "unit": "dB(A)"}, {"step": "s", "dof": "b", "unit": "dB(A)"}],
            "rows": [
                {"value": "50", "levels_db": [1.0, 2.0], "map_db": [10.0, 11.0, null, 21.0]},
                {"value": "60", "levels_db": [1.0, 2.0], "map_db": [12.0, 13.0, 22.0, 23.0]}
            ]
        });
        let (cells, label, unit) = cells_from_sweep(&sweep, 1).unwrap();
        assert_eq!(label, "s at b");
        assert_eq!(unit, "dB(A)");
        let got: Vec<(f64, f64, f64)> = cells.iter().map(|c| (c.freq, c.speed, c.level)).collect();
        assert_eq!(
            got,
            vec![
                (50.0, 50.0, 11.0),
                (100.0, 50.0, 21.0),
                (60.0, 60.0, 13.0),
                (120.0, 60.0, 23.0)
            ]
        );
        // column 0: the order 2 at 50 rev/s is left out (null)
        assert_eq!(cells_from_sweep(&sweep, 0).unwrap().0.len(), 3);
        assert!(cells_from_sweep(&sweep, 2).is_err());
        assert!(cells_from_sweep(&json!({"orders": [], "columns": [], "rows": []}), 0).is_err());
    }

    #[test]
    fn the_scale_runs_dark_to_light() {
        let lum = |c: RGBColor| 0.2126 * c.0 as f64 + 0.7152 * c.1 as f64 + 0.0722 * c.2 as f64;
        let l: Vec<f64> = (0..=10)
            .map(|k| lum(scale_colour(k as f64 / 10.0)))
            .collect();
        assert!(l.windows(2).all(|w| w[1] > w[0]), "{l:?}");
    }

    #[test]
    fn the_map_draws_cells_scale_and_the_worst_speed() {
        let rows: Vec<serde_json::Value> = (0..5)
            .map(|k| {
                let s = 40.0 + 5.0 * k as f64;
                json!({"value": s.to_string(), "levels_db": [30.0 + k as f64 - if k == 4 { 10.0 } else { 0.0 }],
                       "map_db": [20.0 + k as f64, 10.0, null]})
            })
            .collect();
        let spec = PlotSpec::from_json(
            &json!({"kind": "speed-map", "width": 700, "height": 400,
                    "sweep": {"orders": [1.0, 2.0, 3.0], "columns": [{"step": "t", "dof": "room:bed", "unit": "dB(A)"}], "rows": rows}})
            .to_string(),
        )
        .unwrap();
        let (svg, _) = super::super::render_svg(&spec, &std::collections::BTreeMap::new()).unwrap();
        // 5 speeds × 2 orders with a level, 64 scale steps, the background and panel
        let rects = svg.matches("<rect").count();
        assert!(rects >= 10 + 64, "{rects}");
        // the loudest overall speed is 55 rev/s (k = 3), marked
        assert!(svg.contains("loudest: 55 rev/s"), "no worst-speed mark");
        assert!(svg.contains("line level (dB(A))"));
        // a sweep with another view is refused naming it
        let bad = PlotSpec::from_json(&json!({"kind": "bode", "sweep": {}}).to_string());
        assert!(bad.is_err_and(|e| e.field.as_deref() == Some("sweep")));
    }
}
