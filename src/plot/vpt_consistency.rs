//! A to-virtual-points step's consistencies over frequency, one drawing
//! per point: the sensor consistency ρ_u and the impact consistency ρ_f of
//! the run report (`vpt::VirtualPointReport`) as `lines` against the
//! frequencies of the step's set, with the step's threshold drawn flat.
//! The page shows them beside the point's geometry.

use super::drawing::{summary_text, Drawing};
use super::render::render_svg;
use super::spec::{LineData, PlotSpec};
use crate::error::{quote, Error, Result};
use crate::frf::FrfSet;
use crate::vpt::VirtualPointReport;
use std::collections::BTreeMap;

fn num(v: Option<f64>) -> String {
    v.map_or("n/a".to_string(), |x| format!("{x:.4}"))
}

/// A frequency in Hz to the millihertz, without trailing zeros.
fn hz(v: Option<f64>) -> String {
    v.map_or("n/a".to_string(), |x| {
        format!("{}", (x * 1e3).round() / 1e3)
    })
}

/// The virtual points a run report gives for step `step` (refused: no such
/// step, or a step without virtual points, naming the step).
pub fn step_virtual_points(
    report: &serde_json::Value,
    step: &str,
) -> Result<Vec<VirtualPointReport>> {
    let steps = report
        .get("steps")
        .and_then(|s| s.as_array())
        .ok_or_else(|| Error::missing("the run report has no steps").field("report"))?;
    let st = steps
        .iter()
        .find(|s| s.get("id").and_then(|i| i.as_str()) == Some(step))
        .ok_or_else(|| {
            Error::missing(format!("the run report has no step '{}'", quote(step))).field("step")
        })?;
    let vps = st
        .get("virtual_points")
        .filter(|v| !v.is_null())
        .ok_or_else(|| {
            Error::missing(format!(
                "step '{}' of the run report has no virtual points (not a to-virtual-points step)",
                quote(step)
            ))
            .field("step")
        })?;
    serde_json::from_value(vps.clone()).map_err(|e| {
        Error::parse(format!(
            "the virtual points of step '{}' in the run report: {e}",
            quote(step)
        ))
        .field("virtual_points")
    })
}

/// One drawing per virtual point of step `step` in `report`, its x axis
/// the frequencies of `grid` (the set the step made or read; its line
/// count must equal the report's), `width` × `height` px each.
pub fn vpt_consistency_svgs(
    report: &serde_json::Value,
    step: &str,
    grid: &FrfSet,
    width: u32,
    height: u32,
) -> Result<Vec<Drawing>> {
    let points = step_virtual_points(report, step)?;
    let f = &grid.freqs;
    let mut out = Vec::with_capacity(points.len());
    for p in &points {
        for (side, v) in [
            ("sensor", &p.sensor_consistency),
            ("impact", &p.impact_consistency),
        ] {
            if v.len() != f.len() {
                return Err(Error::usage(format!(
                    "the {side} consistency of point '{}' has {} lines, set '{}' has {}: not the step's grid",
                    quote(&p.name),
                    v.len(),
                    quote(&grid.name),
                    f.len()
                ))
                .field("grid"));
            }
        }
        let y =
            |v: &[Option<f64>]| -> Vec<f64> { v.iter().map(|x| x.unwrap_or(f64::NAN)).collect() };
        let lows = p
            .sensor_consistency
            .iter()
            .chain(p.impact_consistency.iter())
            .flatten()
            .fold(p.threshold, |a, &b| a.min(b));
        let y_min = (lows - 0.05).clamp(-0.05, 0.85).min(p.threshold - 0.05);
        // the lines are set as numbers (a line without a consistency is NaN,
        // which JSON cannot carry)
        let spec = serde_json::json!({
            "kind": "lines",
            "x_log": false,
            "y_log": false,
            "y_range": [y_min, 1.02],
            "width": width,
            "height": height,
            "title": format!("virtual point {}: consistency (1 = rigid)", p.name),
            "x_label": "frequency (Hz)",
            "y_label": "consistency",
        });
        let mut spec: PlotSpec = serde_json::from_value(spec)
            .map_err(|e| Error::internal(format!("consistency plot description: {e}")))?;
        let line = |label: String, y: Vec<f64>| LineData {
            label,
            x: f.clone(),
            y,
            x_from: None,
        };
        spec.lines = vec![
            line("sensors ρu".into(), y(&p.sensor_consistency)),
            line("impacts ρf".into(), y(&p.impact_consistency)),
            line(
                format!("threshold {}", p.threshold),
                vec![p.threshold; f.len()],
            ),
        ];
        let (svg, _) = render_svg(&spec.checked()?, &BTreeMap::new())?;
        let status = match p.status {
            crate::audit::Status::Pass => "pass: both stay at or above the threshold on every line",
            crate::audit::Status::Flag => "flag: a consistency falls below the threshold",
            crate::audit::Status::NotApplicable => "not applicable",
        };
        let (lo, hi) = (
            f.first().copied().unwrap_or(f64::NAN),
            f.last().copied().unwrap_or(f64::NAN),
        );
        let summary = summary_text(&format!(
            "Consistency of virtual point {} (step {step}) over {} lines from {} to {} Hz, with the threshold {} drawn flat. Sensors: worst {} at {} Hz. Impacts: worst {} at {} Hz. Status {status}.",
            p.name,
            f.len(),
            hz(Some(lo)),
            hz(Some(hi)),
            p.threshold,
            num(p.worst_sensor_consistency),
            hz(p.worst_sensor_consistency_hz),
            num(p.worst_impact_consistency),
            hz(p.worst_impact_consistency_hz),
        ));
        out.push(Drawing {
            svg,
            width: width as f64,
            height: height as f64,
            summary,
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Direction, Dof};
    use crate::units::Quantity;

    fn grid(n: usize) -> FrfSet {
        let d = Dof::new("b", "1", Direction::Z);
        FrfSet::zeros(
            "vp",
            (1..=n).map(|i| i as f64 * 10.0).collect(),
            vec![d.clone()],
            vec![d],
            Quantity::Acceleration,
            Quantity::Force,
        )
    }

    fn report(rho_u: &[f64], status: &str) -> serde_json::Value {
        serde_json::json!({"steps": [{"id": "foot", "virtual_points": [{
            "name": "b:vp", "dofs": [], "origin_m": [0.0, 0.0, 0.0], "sensors": [], "impacts": [],
            "sensor_singular_values": [], "impact_singular_values": [], "threshold": 0.9,
            "sensor_consistency": rho_u, "impact_consistency": [1.0, 1.0, null],
            "worst_sensor_consistency": 0.5, "worst_sensor_consistency_hz": 20.0,
            "worst_impact_consistency": 1.0, "worst_impact_consistency_hz": 10.0,
            "status": status}]}]})
    }

    // The drawing (plotters' SVG backend, as every plot's export) is one
    // <svg> document with the legend's labels and at least three polylines,
    // one per curve (common practice); the page parses it as XML
    // (tests/e2e/vpoints.test.mjs).
    #[test]
    fn one_drawing_per_point_with_three_lines_and_the_status_in_words() {
        let d = vpt_consistency_svgs(
            &report(&[1.0, 0.5, 0.95], "flag"),
            "foot",
            &grid(3),
            640,
            300,
        )
        .unwrap();
        assert_eq!(d.len(), 1);
        assert!(
            d[0].summary.contains("worst 0.5000 at 20 Hz"),
            "{}",
            d[0].summary
        );
        assert!(d[0].summary.contains("Status flag"));
        assert!(d[0].svg.trim_start().starts_with("<svg"));
        assert!(d[0].svg.trim_end().ends_with("</svg>"));
        assert!(d[0].svg.contains("threshold 0.9"));
        assert!(d[0].svg.matches("<polyline").count() >= 3, "{}", d[0].svg);
    }

    #[test]
    fn a_step_without_points_or_another_grid_is_refused() {
        let r = report(&[1.0, 0.5, 0.95], "pass");
        let e = vpt_consistency_svgs(&r, "nope", &grid(3), 640, 300).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("step"));
        let e = vpt_consistency_svgs(&r, "foot", &grid(4), 640, 300).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("grid"));
        let plain = serde_json::json!({"steps": [{"id": "foot", "virtual_points": null}]});
        let e = vpt_consistency_svgs(&plain, "foot", &grid(3), 640, 300).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("step"));
    }
}
