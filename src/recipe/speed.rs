//! A speed sweep: a source whose excitation is given per order (per DOF and
//! order, a complex peak amplitude), driven at each speed of the sweep. At a
//! speed of s revolutions per second, order k excites the line k·s Hz; the
//! recipe's transfer (`frf`, a component or step) is resampled onto those
//! lines by [`crate::grid::resample`] (never extrapolated: an order whose
//! line falls outside the transfer's grid is left out at that speed, with a
//! note) and the response is [`crate::predict::operational_response`], the
//! function the `respond` operation calls. The level at a speed is the
//! overall level of that line spectrum (dB, dB(A) for sound pressure, as the
//! report weights it); the map gives each order's line level.

use crate::error::{quote, Error, Result};
use crate::frf::{Dof, FrfSet, SignalKind};
use crate::grid::{self, Interp};
use crate::levels;
use crate::predict;
use crate::recipe::report::weighting_for;
use num_complex::Complex64;
use serde::{Deserialize, Serialize};

/// The `"speed"` key of a sweep: the transfer and the excitation per order.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SpeedSource {
    /// A component or step holding FRFs from the orders' DOFs to the targets.
    pub frf: String,
    /// The excitation: one entry per DOF and order.
    pub orders: Vec<OrderForce>,
    /// Resampling of the transfer onto the order lines: "re-im" (default)
    /// or "log-mag-phase".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub interp: Option<String>,
}

/// One order's complex peak amplitude at one DOF, in the transfer's input
/// quantity (N for a force), SI units: the same at every speed (`re`,
/// `im`), or a table over speed (`by_speed`, linear in re and im between
/// its rows, never extrapolated: a sweep reaching outside it is refused).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OrderForce {
    pub dof: String,
    /// The order: multiples of the rotation frequency (above 0).
    pub order: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub re: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub im: Option<f64>,
    /// Rows [speed in rev/s, re, im], speeds increasing, two rows or more.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub by_speed: Option<Vec<[f64; 3]>>,
}

impl OrderForce {
    /// The amplitude at `speed` rev/s (checked entries only: see
    /// [`SpeedSource::check`]); None outside a table's speeds.
    pub fn amplitude_at(&self, speed: f64) -> Option<Complex64> {
        let Some(t) = &self.by_speed else {
            return Some(Complex64::new(self.re?, self.im?));
        };
        let j = t.iter().position(|r| r[0] >= speed)?;
        if t[j][0] == speed {
            return Some(Complex64::new(t[j][1], t[j][2]));
        }
        let a = t.get(j.checked_sub(1)?)?;
        let b = &t[j];
        let x = (speed - a[0]) / (b[0] - a[0]);
        Some(Complex64::new(
            a[1] + x * (b[1] - a[1]),
            a[2] + x * (b[2] - a[2]),
        ))
    }

    /// Checks of one entry (`at` names a field of it).
    fn check(&self, at: &dyn Fn(&str) -> String) -> Result<()> {
        match (&self.by_speed, self.re, self.im) {
            (None, Some(re), Some(im)) => {
                for (k, x) in [("re", re), ("im", im)] {
                    if !x.is_finite() {
                        return Err(Error::recipe(format!(
                            "'{k}' is {x}; expected a finite number"
                        ))
                        .field(at(k)));
                    }
                }
                Ok(())
            }
            (None, _, _) => Err(Error::recipe(
                "the amplitude is missing: give 're' and 'im' (the same at every speed) or 'by_speed' (a table over speed)",
            )
            .field(at("re"))),
            (Some(_), Some(_), _) | (Some(_), _, Some(_)) => Err(Error::recipe(
                "give either 're'/'im' (the same at every speed) or 'by_speed', not both",
            )
            .field(at("by_speed"))),
            (Some(t), None, None) => {
                if t.len() < 2 {
                    return Err(Error::recipe(format!(
                        "{} row(s); a table over speed needs two rows or more [speed rev/s, re, im]",
                        t.len()
                    ))
                    .field(at("by_speed")));
                }
                for (r, row) in t.iter().enumerate() {
                    if row.iter().any(|x| !x.is_finite()) || row[0] <= 0.0 {
                        return Err(Error::recipe(format!(
                            "row {r} is {row:?}; expected [speed above 0 in rev/s, re, im], finite"
                        ))
                        .field(at("by_speed")));
                    }
                    if r > 0 && row[0] <= t[r - 1][0] {
                        return Err(Error::recipe(format!(
                            "row {r}: speed {} rev/s after {} rev/s; the speeds must increase",
                            row[0],
                            t[r - 1][0]
                        ))
                        .field(at("by_speed")));
                    }
                }
                Ok(())
            }
        }
    }
}

/// The keys of `"speed"` and of each entry of its `"orders"` (for the help).
pub const SPEED_FIELDS: &[(&str, &str)] = &[
    ("frf", "a component or step: FRFs from the orders' DOFs to the targets"),
    ("orders", "list of {dof, order, re, im} or {dof, order, by_speed}: each order's complex peak amplitude at a DOF, in the FRFs' input quantity (N for a force), the same at every speed (re, im) or a table over speed (by_speed: rows [speed rev/s, re, im], speeds increasing, linear between rows, never extrapolated); order k at a speed of s rev/s is the line k·s Hz"),
    ("interp", "resampling of the FRFs onto the order lines: re-im (default) or log-mag-phase; lines outside the FRFs' grid are left out, never extrapolated"),
];

/// The overall level of each target, each order's line level (orders ×
/// targets, row-major by order) and the notes of one speed.
pub type SpeedLevels = (Vec<Option<f64>>, Vec<Option<f64>>, Vec<String>);

impl SpeedSource {
    /// The distinct orders, ascending.
    pub fn order_list(&self) -> Vec<f64> {
        let mut o: Vec<f64> = self.orders.iter().map(|o| o.order).collect();
        o.sort_by(|a, b| a.total_cmp(b));
        o.dedup();
        o
    }

    /// Every key checked: the DOFs parse, orders above 0 and finite,
    /// amplitudes finite, no DOF and order given twice. Errors name the entry.
    pub fn check(&self) -> Result<()> {
        if self.orders.is_empty() {
            return Err(
                Error::recipe("'orders' is empty: nothing excites the transfer").field("orders"),
            );
        }
        self.interp()?;
        for (i, o) in self.orders.iter().enumerate() {
            let at = |f: &str| format!("orders[{i}].{f}");
            Dof::parse(&o.dof, "").map_err(|e| e.field(at("dof")))?;
            if !o.order.is_finite() || o.order <= 0.0 {
                return Err(Error::recipe(format!(
                    "order {} : expected a finite number above 0",
                    o.order
                ))
                .field(at("order")));
            }
            o.check(&at)?;
            if let Some(j) = self.orders[..i]
                .iter()
                .position(|p| p.dof.trim() == o.dof.trim() && p.order == o.order)
            {
                return Err(Error::recipe(format!(
                    "order {} at '{}' is given twice (orders[{j}] and orders[{i}])",
                    o.order,
                    quote(&o.dof)
                ))
                .field(at("dof")));
            }
        }
        Ok(())
    }

    /// Every speed of the sweep lies inside every amplitude table: a table
    /// is never extrapolated. The error names the entry and both ranges.
    pub fn check_speeds(&self, speeds: &[f64]) -> Result<()> {
        let (Some(lo), Some(hi)) = (
            speeds.iter().copied().reduce(f64::min),
            speeds.iter().copied().reduce(f64::max),
        ) else {
            return Ok(());
        };
        for (i, o) in self.orders.iter().enumerate() {
            let Some(t) = &o.by_speed else { continue };
            let (Some(a), Some(b)) = (t.first(), t.last()) else {
                continue;
            };
            if lo < a[0] || hi > b[0] {
                return Err(Error::recipe(format!(
                    "the sweep runs from {lo} to {hi} rev/s, but the amplitude table of order {} at '{}' covers {}–{} rev/s; a table is not extrapolated: extend it or narrow the sweep",
                    o.order,
                    quote(&o.dof),
                    a[0],
                    b[0]
                ))
                .field(format!("orders[{i}].by_speed")));
            }
        }
        Ok(())
    }

    fn interp(&self) -> Result<Interp> {
        match &self.interp {
            None => Ok(Interp::LinearReIm),
            Some(s) => Interp::parse(s).map_err(|e| e.field("interp")),
        }
    }

    /// The excitation at `speed` rev/s on the transfer `h`: a peak spectrum
    /// at the order lines inside `h`'s grid, and a note for each order left
    /// out. None when no order falls inside the grid.
    pub fn excitation_at(&self, h: &FrfSet, speed: f64) -> Result<(Option<FrfSet>, Vec<String>)> {
        let (Some(&lo), Some(&hi)) = (h.freqs.first(), h.freqs.last()) else {
            return Err(Error::recipe(format!("'{}' has no lines", h.name)).field("frf"));
        };
        let mut notes = Vec::new();
        let mut kept = Vec::new();
        for k in self.order_list() {
            let f = k * speed;
            if f < lo || f > hi {
                notes.push(format!(
                    "order {k} at {speed} rev/s is {f} Hz, outside the FRFs' grid {lo}–{hi} Hz: left out"
                ));
            } else {
                kept.push((k, f));
            }
        }
        if kept.is_empty() {
            return Ok((None, notes));
        }
        let mut dofs: Vec<Dof> = Vec::new();
        for o in &self.orders {
            let d = Dof::parse(&o.dof, "")?;
            if !dofs.contains(&d) {
                dofs.push(d);
            }
        }
        let mut exc = predict::new_spectrum(
            &format!("orders at {speed} rev/s"),
            kept.iter().map(|p| p.1).collect(),
            dofs.clone(),
            h.in_qty,
            SignalKind::Peak,
        );
        for o in &self.orders {
            let d = Dof::parse(&o.dof, "")?;
            let (Some(r), Some(line)) = (
                dofs.iter().position(|x| *x == d),
                kept.iter().position(|p| p.0 == o.order),
            ) else {
                continue;
            };
            let Some(a) = o.amplitude_at(speed) else {
                return Err(Error::recipe(format!(
                    "{speed} rev/s is outside the amplitude table of order {} at '{}'",
                    o.order,
                    quote(&o.dof)
                ))
                .field("by_speed"));
            };
            exc.set(line, r, 0, a);
        }
        Ok((Some(exc), notes))
    }

    /// The response at `speed` rev/s: the transfer resampled onto the order
    /// lines, times the excitation (`respond`'s function). None when no
    /// order falls inside the grid; notes for orders left out.
    pub fn response_at(&self, h: &FrfSet, speed: f64) -> Result<(Option<FrfSet>, Vec<String>)> {
        let (exc, notes) = self.excitation_at(h, speed)?;
        let Some(exc) = exc else {
            return Ok((None, notes));
        };
        let hr = grid::resample(h, &exc.freqs, self.interp()?)?;
        let y = predict::operational_response(&hr, &exc)?;
        Ok((Some(y), notes))
    }

    /// The overall level of each target at `speed` and each order's line
    /// level (orders × targets, row-major by order; None where an order is
    /// left out or a level is not defined).
    pub fn levels_at(&self, h: &FrfSet, speed: f64) -> Result<SpeedLevels> {
        let orders = self.order_list();
        let n = h.n_out();
        let mut overall = vec![None; n];
        let mut map = vec![None; orders.len() * n];
        let (y, notes) = self.response_at(h, speed)?;
        if let Some(y) = y {
            let w = weighting_for(&y);
            for (i, o) in overall.iter_mut().enumerate() {
                let Ok(a) = levels::spectrum_levels(&y, i, 3, w) else {
                    continue;
                };
                *o = a.overall_db.is_finite().then_some(a.overall_db);
                for (f, l) in a.freqs.iter().zip(&a.line_db) {
                    let Some(k) = orders.iter().position(|k| k * speed == *f) else {
                        continue;
                    };
                    let v = l + levels::weighting_db(w, *f);
                    map[k * n + i] = v.is_finite().then_some(v);
                }
            }
        }
        Ok((overall, map, notes))
    }
}

#[cfg(test)]
mod tests {
    use crate::limits::Limits;
    use crate::recipe::{parse, run_sweep, run_with, MapSource, SweepSpec};

    /// The demo's files and recipe with a speed sweep of the casing seats
    /// through `seat_to_anchor` (invented order amplitudes, N).
    fn demo(speeds: serde_json::Value) -> (MapSource, serde_json::Value) {
        static FILES: std::sync::OnceLock<Vec<(String, Vec<u8>)>> = std::sync::OnceLock::new();
        let files = FILES
            .get_or_init(|| crate::demo_files::files().unwrap())
            .clone();
        let mut src = MapSource::default();
        let mut recipe = serde_json::Value::Null;
        for (n, b) in files {
            if n.ends_with(".recipe.json") {
                recipe = serde_json::from_slice(&b).unwrap();
            }
            src.0.insert(n, b);
        }
        let mut orders = Vec::new();
        for (s, seat) in ["101", "102", "103", "104"].iter().enumerate() {
            for (k, amp) in [(1.0, 2.0), (2.0, 0.8), (3.0, 0.3)] {
                orders.push(
                    serde_json::json!({"dof": format!("casing:{seat}+Z"), "order": k,
                    "re": amp * (1.0 + 0.1 * s as f64), "im": -0.2 * amp}),
                );
            }
        }
        let mut sweep = serde_json::json!({"name": "compressor",
            "speed": {"frf": "seat_to_anchor", "orders": orders}});
        for (k, v) in speeds.as_object().unwrap() {
            sweep[k] = v.clone();
        }
        recipe["sweep"] = sweep;
        (src, recipe)
    }

    #[test]
    fn a_speed_line_equals_a_respond_run_at_that_speed() {
        let (src, r) = demo(serde_json::json!({"from": 20.0, "to": 400.0, "steps": 20}));
        let rec = parse(&r.to_string()).unwrap();
        let sw = run_sweep(&rec, &src, &Limits::default(), None, 2).unwrap();
        let sp: &SweepSpec = rec.sweep.as_ref().unwrap();
        let speed = sp.speed.as_ref().unwrap();
        // the transfer as the baseline makes it
        let values = crate::recipe::execute::baseline_values(
            &rec,
            &crate::recipe::load_components(&rec, &src).unwrap(),
            &Limits::default(),
            &src,
        )
        .unwrap();
        let h = &values["seat_to_anchor"];
        let row = &sw.rows[5];
        let s: f64 = row.value.parse().unwrap();
        // the same speed as a plain recipe: an inline excitation at k·s Hz,
        // the transfer resampled onto it, and a respond step
        let (exc, _) = speed.excitation_at(h, s).unwrap();
        let exc = exc.unwrap();
        let mut plain = r.clone();
        plain.as_object_mut().unwrap().remove("sweep");
        plain["components"]["orders_at_s"] =
            serde_json::json!({"inline": serde_json::to_value(&exc).unwrap()});
        let steps = plain["steps"].as_array_mut().unwrap();
        steps.push(serde_json::json!({"id": "h_at_s", "op": "resample", "from": "seat_to_anchor", "like": "orders_at_s"}));
        steps.push(serde_json::json!({"id": "y_at_s", "op": "respond", "frf": "h_at_s", "excitation": "orders_at_s"}));
        plain["outputs"] = serde_json::json!(["y_at_s"]);
        let pr = parse(&plain.to_string()).unwrap();
        let got = run_with(&pr, &src, &Limits::default()).unwrap();
        let y_respond = &got.outputs[0];
        let (y_sweep, _) = speed.response_at(h, s).unwrap();
        let y_sweep = y_sweep.unwrap();
        assert_eq!(y_respond.freqs, y_sweep.freqs);
        for (a, b) in y_respond.data.iter().zip(&y_sweep.data) {
            assert!((a - b).norm() <= 1e-12 * a.norm().max(1e-300), "{a} {b}");
        }
        let levels = got.report.steps.last().unwrap().levels.clone().unwrap();
        for (l, v) in levels.iter().zip(&row.levels_db) {
            assert!((l.overall_db.unwrap() - v.unwrap()).abs() <= 1e-12);
        }
        // each map entry is one line's level: a peak amplitude |y| is a
        // mean square |y|²/2 (a sinusoid), in dB re 1 nm/s (ISO 1683:2015,
        // velocity)
        let orders = speed.order_list();
        let n = h.n_out();
        for (k, f) in orders.iter().map(|k| k * s).enumerate() {
            let line = y_sweep.freqs.iter().position(|x| *x == f).unwrap();
            for i in 0..n {
                let y = y_sweep.get(line, i, 0).norm();
                let want = 10.0 * (y * y / 2.0 / 1e-18).log10();
                let got = row.map_db[k * n + i].unwrap();
                assert!((got - want).abs() < 1e-9, "{got} {want}");
            }
        }
    }

    #[test]
    fn orders_beyond_the_grid_are_left_out_and_the_worst_speed_is_named() {
        // the demo's grid is 10–1000 Hz: order 3 at 400 rev/s is 1200 Hz
        let (src, r) = demo(serde_json::json!({"values": [30.0, 58.0, 400.0]}));
        let rec = parse(&r.to_string()).unwrap();
        let sw = run_sweep(&rec, &src, &Limits::default(), None, 1).unwrap();
        assert_eq!(sw.orders, vec![1.0, 2.0, 3.0]);
        assert!(
            sw.notes
                .iter()
                .any(|n| n.contains("order 3 at 400 rev/s is 1200 Hz")),
            "{:?}",
            sw.notes
        );
        let n = sw.columns.len();
        assert!(sw.rows[2].map_db[2 * n].is_none());
        assert!(sw.rows[2].map_db[n].is_some());
        let csv = crate::recipe::sweep_map_csv(&sw, "x").unwrap();
        assert!(
            csv.contains("seat_to_anchor wall:a1+X order 3 [dB]"),
            "{csv}"
        );
        let head = crate::recipe::sweep_headline(&sw);
        let worst = sw
            .rows
            .iter()
            .max_by(|a, b| a.levels_db[0].unwrap().total_cmp(&b.levels_db[0].unwrap()))
            .unwrap();
        assert!(
            head[0].contains(&format!("peaks at {} rev/s", worst.value)),
            "{head:?}"
        );
        // the run's headline names the same speed beside the level there
        let c = &sw.columns[0];
        let phrase = crate::recipe::sweep::loudest_speed(&sw, &c.dof, &c.unit).unwrap();
        assert!(
            phrase.contains(&format!("at {} rev/s", worst.value)),
            "{phrase}"
        );
        assert!(crate::recipe::sweep::loudest_speed(&sw, "nowhere:1+X", &c.unit).is_none());
        let one = run_sweep(&rec, &src, &Limits::default(), None, 2).unwrap();
        assert_eq!(one, sw);
    }

    #[test]
    fn a_sweep_too_large_for_the_memory_budget_is_refused_before_it_runs() {
        // 10^6 speeds × 4 targets × (1 + 36 orders) levels of 16 bytes: 2.37 GB
        // against the default 2 GiB budget
        let (src, mut r) = demo(serde_json::json!({"from": 20.0, "to": 400.0, "steps": 1_000_000}));
        let more: Vec<serde_json::Value> = (4..=9)
            .flat_map(|k| {
                ["101", "102", "103", "104"].map(|s| {
                    serde_json::json!({"dof": format!("casing:{s}+Z"), "order": k as f64, "re": 0.1, "im": 0.0})
                })
            })
            .collect();
        if let Some(o) = r["sweep"]["speed"]["orders"].as_array_mut() {
            o.extend(more);
        }
        let rec = parse(&r.to_string()).unwrap();
        let e = run_sweep(&rec, &src, &Limits::default(), None, 1)
            .unwrap_err()
            .to_string();
        assert!(e.contains("the sweep's levels (1000000 points)"), "{e}");
    }

    #[test]
    fn bad_speed_sweeps_are_refused_naming_the_field() {
        let err = |r: serde_json::Value| parse(&r.to_string()).unwrap_err().to_string();
        let (_, r) = demo(serde_json::json!({"values": [30.0, 0.0]}));
        let e = err(r);
        assert!(e.contains("values[1]") && e.contains("above 0"), "{e}");
        let (_, mut r) = demo(serde_json::json!({"values": [30.0]}));
        r["sweep"]["speed"]["orders"][2]["order"] = (-1.0).into();
        let e = err(r.clone());
        assert!(e.contains("orders[2].order"), "{e}");
        r["sweep"]["speed"]["orders"] = serde_json::json!([]);
        assert!(err(r.clone()).contains("'orders' is empty"));
        let (_, mut r) = demo(serde_json::json!({"values": [30.0]}));
        r["sweep"]["speed"]["frf"] = "nothing".into();
        assert!(err(r).contains("'nothing'"));
        let (_, mut r) = demo(serde_json::json!({"values": [30.0]}));
        r["sweep"]["speed"]["interp"] = "cubic".into();
        assert!(err(r).contains("cubic"));
        let (_, mut r) = demo(serde_json::json!({"values": [30.0]}));
        r["sweep"]["speed"]["amplitude"] = 1.into();
        assert!(err(r).contains("amplitude"));
        // a DOF that is not an input of the transfer, at run time
        let (src, mut r) = demo(serde_json::json!({"values": [30.0]}));
        r["sweep"]["speed"]["orders"][0]["dof"] = "casing:999+Z".into();
        let rec = parse(&r.to_string()).unwrap();
        let e = run_sweep(&rec, &src, &Limits::default(), None, 1)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("orders[0].dof") && e.contains("casing:999+Z"),
            "{e}"
        );
    }

    #[test]
    fn an_amplitude_table_is_interpolated_and_never_extrapolated() {
        // linear interpolation in re and im, worked by hand:
        // halfway between (1, 0) at 10 rev/s and (3, 2) at 20 rev/s is (2, 1)
        let o: super::OrderForce = serde_json::from_value(serde_json::json!(
            {"dof": "casing:101+Z", "order": 1, "by_speed": [[10, 1, 0], [20, 3, 2]]}))
        .unwrap();
        assert_eq!(
            o.amplitude_at(15.0),
            Some(num_complex::Complex64::new(2.0, 1.0))
        );
        assert_eq!(
            o.amplitude_at(10.0),
            Some(num_complex::Complex64::new(1.0, 0.0))
        );
        assert_eq!(
            o.amplitude_at(20.0),
            Some(num_complex::Complex64::new(3.0, 2.0))
        );
        assert_eq!(o.amplitude_at(9.99), None);
        assert_eq!(o.amplitude_at(20.01), None);

        // a table twice the constant amplitude at 60 rev/s and equal to it at
        // 30: the line at 30 is the constant's bit for bit, at 60 it is
        // 20·log10(2) = 6.0206 dB louder at every order
        let (src, r) = demo(serde_json::json!({"values": [30.0, 60.0]}));
        let rec = parse(&r.to_string()).unwrap();
        let plain = run_sweep(&rec, &src, &Limits::default(), None, 1).unwrap();
        let mut t = r.clone();
        for o in t["sweep"]["speed"]["orders"].as_array_mut().unwrap() {
            let (re, im) = (o["re"].as_f64().unwrap(), o["im"].as_f64().unwrap());
            let m = o.as_object_mut().unwrap();
            m.remove("re");
            m.remove("im");
            m.insert(
                "by_speed".into(),
                serde_json::json!([[30.0, re, im], [60.0, 2.0 * re, 2.0 * im]]),
            );
        }
        let rec = parse(&t.to_string()).unwrap();
        let tab = run_sweep(&rec, &src, &Limits::default(), None, 1).unwrap();
        assert_eq!(tab.rows[0].levels_db, plain.rows[0].levels_db);
        assert_eq!(tab.rows[0].map_db, plain.rows[0].map_db);
        for (a, b) in tab.rows[1].map_db.iter().zip(&plain.rows[1].map_db) {
            if let (Some(a), Some(b)) = (a, b) {
                assert!((a - b - 20.0 * 2f64.log10()).abs() < 1e-9, "{a} {b}");
            }
        }
        // a sweep reaching outside a table is refused, naming the entry
        let mut wide = t.clone();
        wide["sweep"]["values"] = serde_json::json!([30.0, 61.0]);
        let rec = parse(&wide.to_string()).unwrap();
        let e = run_sweep(&rec, &src, &Limits::default(), None, 1)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("orders[0].by_speed") && e.contains("30–60 rev/s") && e.contains("61"),
            "{e}"
        );
    }

    #[test]
    fn bad_amplitude_tables_are_refused_naming_the_field() {
        let err = |r: &serde_json::Value| parse(&r.to_string()).unwrap_err().to_string();
        let (_, mut r) = demo(serde_json::json!({"values": [30.0]}));
        let o = &mut r["sweep"]["speed"]["orders"][1];
        o["by_speed"] = serde_json::json!([[20, 1, 0], [40, 1, 0]]);
        let e = err(&r);
        assert!(
            e.contains("orders[1].by_speed") && e.contains("not both"),
            "{e}"
        );
        let o = r["sweep"]["speed"]["orders"][1].as_object_mut().unwrap();
        o.remove("re");
        o.remove("im");
        assert!(parse(&r.to_string()).is_ok());
        for (table, says) in [
            (serde_json::json!([[20, 1, 0]]), "two rows"),
            (serde_json::json!([[20, 1, 0], [20, 2, 0]]), "must increase"),
            (serde_json::json!([[20, 1, 0], [0, 2, 0]]), "speed above 0"),
        ] {
            r["sweep"]["speed"]["orders"][1]["by_speed"] = table;
            let e = err(&r);
            assert!(e.contains("orders[1].by_speed") && e.contains(says), "{e}");
        }
        r["sweep"]["speed"]["orders"][1]
            .as_object_mut()
            .unwrap()
            .remove("by_speed");
        let e = err(&r);
        assert!(
            e.contains("orders[1].re") && e.contains("amplitude is missing"),
            "{e}"
        );
    }
}
