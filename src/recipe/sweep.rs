//! The recipe's `"sweep"` section: the baseline run at a list of points over
//! one parameter (joint parameters, a scale factor, or a component swapped
//! for another), each point computed as the variant with that value
//! ([`super::Variant`], the same execution), and every response and
//! path-total level (dB, dB(A) for sound pressure: the report's weighting)
//! gathered against the parameter.
//!
//! Points are computed on threads (the split does not change any number:
//! each point is computed alone), and a run may compute one contiguous
//! slice of the points ([`slice`]), so an existing batch engine can run the
//! slices as separate jobs; [`merge_csv`] folds their files into the file of
//! the whole run, byte for byte.
//!
//! # The file `NAME.sweep.csv`
//! ```text
//! # mortise-sweep 1
//! # name: isolator stiffness
//! # parameter: set_joints mounted#0.k, mounted#1.k
//! # recipe sha256: 9f2c…
//! # points: 0..21 of 21
//! index,value,bedroom room:bed [dB(A)],anchor_velocity wall:a1+X [dB]
//! 0,200000,41.93,…
//! ```
//! Comment lines first (in this order; `recipe sha256` is the SHA-256 of the
//! recipe file's bytes), then one header row and one row per point: its
//! 0-based index among all the points, the parameter value (a number, or a
//! component name for a swap) and the overall level of every level row of
//! the report (empty when a level is not defined). Numbers are written in
//! the shortest form that reads back to the same f64. Fields holding a
//! comma or a quote are quoted, quotes doubled. `points: A..B of N` is the
//! slice a file holds (A inclusive, B exclusive); a whole run is `0..N`.

use super::execute::{baseline_values, execute_on, load_components_with};
use super::monte_carlo::level_values;
use super::speed::SpeedSource;
use super::{check_joint_setting, check_swap, FileSource, Recipe, Variant};
use crate::error::{quote, Error, Result};
use crate::frf::FrfSet;
use crate::limits::Limits;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::ops::Range;

/// The first line of every sweep file.
pub const SWEEP_CSV_MAGIC: &str = "# mortise-sweep 1";
/// Points a sweep may have.
pub const MAX_SWEEP_POINTS: u64 = 1_000_000;

/// The recipe's `"sweep"` as written (checked by [`SweepSpec::points`]).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepSpec {
    /// The sweep's name: its file is NAME.sweep.csv (default "sweep").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Joint parameters set to each point's value: "STEP_ID#INDEX.FIELD".
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub set_joints: Vec<String>,
    /// A component or step whose values are multiplied by each point's value.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scale: Option<String>,
    /// A component replaced by each point's value (a component name).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub swap: Option<String>,
    /// A source excited per order, each point a speed in rev/s.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub speed: Option<SpeedSource>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub from: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub to: Option<f64>,
    /// Number of points from `from` to `to`, both ends included (2 or more).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub steps: Option<serde_json::Number>,
    /// "linear" (the default) or "log".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub spacing: Option<String>,
    /// Explicit points: numbers, or component names for a swap.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub values: Option<Vec<serde_json::Value>>,
}

/// The keys of `"sweep"`, with their meaning (for the help).
pub const SWEEP_FIELDS: &[(&str, &str)] = &[
    ("name", "the sweep's name; its results are NAME.sweep.csv (default \"sweep\")"),
    ("set_joints", "list of joint parameters \"STEP_ID#INDEX.FIELD\" (a couple or decouple step's joint, 0-based; FIELD k, c or eta of its type), all set to each point's value (SI units)"),
    ("scale", "a component or step whose values are multiplied by each point's value"),
    ("swap", "a component replaced, at each point, by the component the point names"),
    ("speed", "a source excited per order: {frf, orders, interp} (keys below); each point a speed in rev/s, the level of the order lines there, and a map of each order's line level (NAME.map.sweep.csv)"),
    ("from", "first value of a range"),
    ("to", "last value of a range"),
    ("steps", "number of points of a range, both ends included (2 or more)"),
    ("spacing", "\"linear\" (default) or \"log\" (from and to above 0)"),
    ("values", "explicit points instead of a range: numbers, or component names for 'swap'"),
];

/// One point's parameter value.
#[derive(Debug, Clone, PartialEq)]
pub enum PointValue {
    Number(f64),
    Name(String),
}

impl PointValue {
    /// As written in the sweep file and the report.
    pub fn text(&self) -> String {
        match self {
            PointValue::Number(x) => format!("{x}"),
            PointValue::Name(n) => n.clone(),
        }
    }
}

impl SweepSpec {
    /// The sweep's name ("sweep" when not given).
    pub fn name(&self) -> &str {
        self.name.as_deref().unwrap_or("sweep")
    }

    /// What is swept, in words ("set_joints mounted#0.k", "scale isolator").
    pub fn parameter(&self) -> String {
        if !self.set_joints.is_empty() {
            format!("set_joints {}", self.set_joints.join(", "))
        } else if let Some(s) = &self.scale {
            format!("scale {s}")
        } else if let Some(s) = &self.swap {
            format!("swap {s}")
        } else if let Some(s) = &self.speed {
            format!("speed [rev/s] through {}", s.frf)
        } else {
            String::new()
        }
    }

    /// Every point, checked against the recipe: each key used or refused,
    /// each value allowed where it goes. Errors name the field.
    pub fn points(&self, r: &Recipe) -> Result<Vec<PointValue>> {
        let err = |field: &str, msg: String| Error::recipe(msg).field(field.to_string());
        if let Some(n) = &self.name {
            super::check_name(n).map_err(|e| e.field("name"))?;
        }
        let kinds = [
            ("set_joints", !self.set_joints.is_empty()),
            ("scale", self.scale.is_some()),
            ("swap", self.swap.is_some()),
            ("speed", self.speed.is_some()),
        ];
        let given: Vec<&str> = kinds.iter().filter(|k| k.1).map(|k| k.0).collect();
        if given.len() != 1 {
            return Err(err(
                "sweep",
                format!(
                    "a sweep varies exactly one of 'set_joints', 'scale', 'swap' or 'speed'; {}",
                    if given.is_empty() {
                        "none is given".to_string()
                    } else {
                        format!("{} are given", given.join(" and "))
                    }
                ),
            ));
        }
        let range = [
            ("from", self.from.is_some()),
            ("to", self.to.is_some()),
            ("steps", self.steps.is_some()),
            ("spacing", self.spacing.is_some()),
        ];
        let points = match &self.values {
            Some(v) => {
                if let Some((k, _)) = range.iter().find(|k| k.1) {
                    return Err(err(
                        k,
                        format!("'{k}' belongs to a range; this sweep gives 'values'. Give either 'values' or 'from', 'to' and 'steps'"),
                    ));
                }
                if v.is_empty() {
                    return Err(err(
                        "values",
                        "'values' is empty: no point to compute".into(),
                    ));
                }
                if v.len() as u64 > MAX_SWEEP_POINTS {
                    return Err(err(
                        "values",
                        format!(
                            "{} points; a sweep may have at most {MAX_SWEEP_POINTS}",
                            v.len()
                        ),
                    ));
                }
                let mut out = Vec::with_capacity(v.len());
                for (i, x) in v.iter().enumerate() {
                    let p = match (x, self.swap.is_some()) {
                        (serde_json::Value::String(s), true) => PointValue::Name(s.clone()),
                        (serde_json::Value::Number(n), false) => {
                            PointValue::Number(n.as_f64().ok_or_else(|| {
                                err(
                                    &format!("values[{i}]"),
                                    format!("'{n}' is not a number mortise reads"),
                                )
                            })?)
                        }
                        (_, true) => {
                            return Err(err(
                                &format!("values[{i}]"),
                                format!(
                                    "{}: a swap's points are component names (text)",
                                    quote(&x.to_string())
                                ),
                            ))
                        }
                        (_, false) => {
                            return Err(err(
                                &format!("values[{i}]"),
                                format!("{}: expected a number", quote(&x.to_string())),
                            ))
                        }
                    };
                    out.push(p);
                }
                out
            }
            None => {
                if self.swap.is_some() {
                    return Err(err(
                        "values",
                        "a swap needs 'values': the component names to put in its place".into(),
                    ));
                }
                let from = self.from.ok_or_else(|| {
                    err(
                        "from",
                        "a sweep needs 'values', or 'from', 'to' and 'steps'; 'from' is missing"
                            .into(),
                    )
                })?;
                let to = self
                    .to
                    .ok_or_else(|| err("to", "a range needs 'to' (its last value)".into()))?;
                let steps = self.steps.as_ref().ok_or_else(|| {
                    err(
                        "steps",
                        "a range needs 'steps' (its number of points, 2 or more)".into(),
                    )
                })?;
                let steps = steps.as_u64().ok_or_else(|| {
                    err(
                        "steps",
                        format!("'steps' is {steps}; expected a whole number of points, 2 or more"),
                    )
                })?;
                for (k, x) in [("from", from), ("to", to)] {
                    if !x.is_finite() {
                        return Err(err(k, format!("'{k}' is {x}; expected a finite number")));
                    }
                }
                if steps < 2 {
                    return Err(err(
                        "steps",
                        format!(
                            "'steps' is {steps}; a range has 2 or more points (both ends included)"
                        ),
                    ));
                }
                if steps > MAX_SWEEP_POINTS {
                    return Err(err(
                        "steps",
                        format!("'steps' is {steps}; a sweep may have at most {MAX_SWEEP_POINTS} points"),
                    ));
                }
                let log = match self.spacing.as_deref() {
                    None | Some("linear") => false,
                    Some("log") => true,
                    Some(o) => {
                        return Err(err(
                            "spacing",
                            format!(
                                "'spacing' is '{}'; expected \"linear\" or \"log\"",
                                quote(o)
                            ),
                        ))
                    }
                };
                if log {
                    for (k, x) in [("from", from), ("to", to)] {
                        if x <= 0.0 {
                            return Err(err(
                                k,
                                format!("'{k}' is {x}; a log spacing needs both ends above 0"),
                            ));
                        }
                    }
                }
                let n = steps as usize;
                (0..n)
                    .map(|i| {
                        let t = i as f64 / (n - 1) as f64;
                        let x = if i == 0 {
                            from
                        } else if i == n - 1 {
                            to
                        } else if log {
                            (from.ln() + (to.ln() - from.ln()) * t).exp()
                        } else {
                            from + (to - from) * t
                        };
                        PointValue::Number(x)
                    })
                    .collect()
            }
        };
        if let Some(sp) = &self.speed {
            sp.check().map_err(|e| e.within("speed"))?;
            let known =
                r.components.contains_key(&sp.frf) || r.steps.iter().any(|s| s.id == sp.frf);
            if !known {
                return Err(Error::recipe(format!(
                    "'frf' names '{}', which is neither a component nor a step",
                    quote(&sp.frf)
                ))
                .field("frf")
                .within("speed"));
            }
        }
        // every point allowed where it goes (the first refused one named)
        for (i, p) in points.iter().enumerate() {
            let at = |e: Error| {
                let f = if self.values.is_some() {
                    format!("values[{i}]")
                } else {
                    format!("point {i} of the range")
                };
                e.field(f)
            };
            match p {
                PointValue::Number(x) => {
                    for k in &self.set_joints {
                        check_joint_setting(r, k, *x)
                            .map_err(|e| at(e).within(format!("set_joints '{}'", quote(k))))?;
                    }
                    if let Some(s) = &self.scale {
                        check_scale(r, s, *x).map_err(at)?;
                    }
                    if self.speed.is_some() && !(x.is_finite() && *x > 0.0) {
                        return Err(at(Error::recipe(format!(
                            "speed {x} rev/s: expected a finite speed above 0"
                        ))));
                    }
                }
                PointValue::Name(n) => {
                    if let Some(s) = &self.swap {
                        check_swap(r, s, n).map_err(at)?;
                    }
                }
            }
        }
        Ok(points)
    }

    /// The variant that computes point `p`.
    pub fn variant(&self, index: usize, p: &PointValue) -> Variant {
        let mut v = Variant {
            name: format!("{} point {index}", self.name()),
            scale: BTreeMap::new(),
            drop_joints: Vec::new(),
            set_joints: BTreeMap::new(),
            swap: BTreeMap::new(),
        };
        match p {
            PointValue::Number(x) => {
                for k in &self.set_joints {
                    v.set_joints.insert(k.clone(), *x);
                }
                if let Some(s) = &self.scale {
                    v.scale.insert(s.clone(), *x);
                }
            }
            PointValue::Name(n) => {
                if let Some(s) = &self.swap {
                    v.swap.insert(s.clone(), n.clone());
                }
            }
        }
        v
    }
}

/// A scale factor on a component or step: the name exists and the factor is finite.
fn check_scale(r: &Recipe, name: &str, x: f64) -> Result<()> {
    let known = r.components.contains_key(name) || r.steps.iter().any(|s| s.id == name);
    if !known {
        return Err(Error::recipe(format!(
            "'scale' names '{}', which is neither a component nor a step",
            quote(name)
        ))
        .field("scale"));
    }
    if !x.is_finite() {
        return Err(Error::recipe(format!(
            "scale factor {x}: expected a finite number"
        )));
    }
    Ok(())
}

/// One level column: a level row of the report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepColumn {
    pub step: String,
    /// respond or paths (a path total).
    pub op: String,
    pub dof: String,
    /// "dB(A)" for sound pressure, else "dB".
    pub unit: String,
}

impl SweepColumn {
    /// "STEP DOF [UNIT]", the column's header.
    pub fn label(&self) -> String {
        format!("{} {} [{}]", self.step, self.dof, self.unit)
    }
}

/// One computed point.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepRow {
    /// 0-based among all the sweep's points.
    pub index: usize,
    /// The parameter value as written in the file.
    pub value: String,
    /// Overall level of each column (None when not defined).
    pub levels_db: Vec<Option<f64>>,
    /// A speed sweep's line level of each order at each column, orders ×
    /// columns row-major by order (None where an order is left out).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub map_db: Vec<Option<f64>>,
}

/// A sweep's results (all its points, or one slice of them).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepReport {
    pub name: String,
    pub parameter: String,
    /// Points of the whole sweep.
    pub total: usize,
    /// The slice computed: first point, one past the last.
    pub first: usize,
    pub end: usize,
    pub columns: Vec<SweepColumn>,
    pub rows: Vec<SweepRow>,
    /// A speed sweep's orders (the map's order axis), ascending.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub orders: Vec<f64>,
    /// What was left out (orders outside the transfer's grid), once each.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
}

/// The `k`-th (1-based) of `n` contiguous slices of `total` points:
/// points total·(k−1)/n up to total·k/n. Refuses k = 0, n = 0 and k > n.
pub fn slice(total: usize, k: usize, n: usize) -> Result<Range<usize>> {
    if n == 0 {
        return Err(Error::usage("a shard K/N needs N of 1 or more; N is 0"));
    }
    if k == 0 || k > n {
        return Err(Error::usage(format!(
            "shard {k}/{n}: K counts from 1 to N ({n})"
        )));
    }
    let at = |i: usize| ((total as u128 * i as u128) / n as u128) as usize;
    Ok(at(k - 1)..at(k))
}

/// Compute points `range` of the recipe's sweep on `threads` threads
/// (contiguous chunks; every point alone, so the split changes nothing).
pub fn run_sweep(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
    range: Option<Range<usize>>,
    threads: usize,
) -> Result<SweepReport> {
    super::check_names(recipe)?;
    let comps = load_components_with(recipe, files, limits)?;
    sweep_on(recipe, &comps, files, limits, range, threads)
}

/// [`run_sweep`] on components already loaded.
pub(crate) fn sweep_on(
    recipe: &Recipe,
    comps: &BTreeMap<String, FrfSet>,
    files: &dyn FileSource,
    limits: &Limits,
    range: Option<Range<usize>>,
    threads: usize,
) -> Result<SweepReport> {
    let spec = recipe
        .sweep
        .as_ref()
        .ok_or_else(|| Error::recipe("the recipe has no \"sweep\" section").field("sweep"))?;
    let points = spec.points(recipe).map_err(|e| e.within("sweep"))?;
    let total = points.len();
    let range = range.unwrap_or(0..total);
    if range.start > range.end || range.end > total {
        return Err(Error::internal(format!(
            "slice {}..{} of {total} points",
            range.start, range.end
        )));
    }
    // a speed sweep reads its transfer from the baseline once
    let transfer = match &spec.speed {
        Some(sp) => {
            let values = baseline_values(recipe, comps, limits, files)?;
            let h = values.get(&sp.frf).cloned().ok_or_else(|| {
                Error::recipe(format!(
                    "'frf' names '{}', which the run did not make",
                    quote(&sp.frf)
                ))
                .field("frf")
                .within("sweep.speed")
            })?;
            if h.signal.is_some() {
                return Err(Error::recipe(format!(
                    "'frf' names '{}', a spectrum; a speed sweep's transfer is an FRF set",
                    quote(&sp.frf)
                ))
                .field("frf")
                .within("sweep.speed"));
            }
            // every DOF of the orders drives an input of the transfer
            for (i, o) in sp.orders.iter().enumerate() {
                let d = crate::frf::Dof::parse(&o.dof, "")?;
                if h.in_place(&d).is_none() {
                    return Err(Error::recipe(format!(
                        "'{}' is not an input of '{}' (its inputs: {})",
                        quote(&o.dof),
                        quote(&sp.frf),
                        h.inputs
                            .iter()
                            .map(|x| x.to_string())
                            .collect::<Vec<_>>()
                            .join(", ")
                    ))
                    .field(format!("orders[{i}].dof"))
                    .within("sweep.speed"));
                }
            }
            let speeds: Vec<f64> = points
                .iter()
                .filter_map(|p| match p {
                    PointValue::Number(x) => Some(*x),
                    PointValue::Name(_) => None,
                })
                .collect();
            sp.check_speeds(&speeds)
                .map_err(|e| e.within("sweep.speed"))?;
            Some((sp, h))
        }
        None => None,
    };
    let columns: Vec<SweepColumn> = match &transfer {
        Some((sp, h)) => {
            let unit = super::report::db_unit(super::report::weighting_for(h));
            h.outputs
                .iter()
                .map(|d| SweepColumn {
                    step: sp.frf.clone(),
                    op: "speed".into(),
                    dof: d.to_string(),
                    unit: unit.to_string(),
                })
                .collect()
        }
        None => level_values(&execute_on(
            recipe,
            comps,
            &super::uncertainty::component_uncertainties(recipe, comps)?.0,
            None,
            limits,
            files,
        )?)
        .iter()
        .map(|((step, op, dof, unit), _)| SweepColumn {
            step: step.clone(),
            op: op.clone(),
            dof: dof.clone(),
            unit: unit.clone(),
        })
        .collect(),
    };
    // what the slice will hold, checked before any point runs: per point a
    // level per column and, for a speed sweep, a line level per order and column
    let orders = transfer.as_ref().map_or(0, |(sp, _)| sp.orders.len());
    let per_point = (columns.len() as u64).saturating_mul(1 + orders as u64);
    limits.check_values(
        &format!("the sweep's levels ({} points)", range.len()),
        (range.len() as u64).checked_mul(per_point),
    )?;
    let todo: Vec<(usize, &PointValue)> = range.clone().map(|i| (i, &points[i])).collect();
    // the components' stated uncertainty, seen by steps that read it (Tikhonov's λ from the noise)
    let (comp_unc, _) = super::uncertainty::component_uncertainties(recipe, comps)?;
    let one = |(i, p): &(usize, &PointValue)| -> Result<(SweepRow, Vec<String>)> {
        let within = |e: Error| {
            e.within(format!(
                "sweep point {i} ({} = {})",
                spec.parameter(),
                p.text()
            ))
        };
        if let (Some((sp, h)), PointValue::Number(speed)) = (&transfer, p) {
            let (levels_db, map_db, notes) = sp.levels_at(h, *speed).map_err(within)?;
            return Ok((
                SweepRow {
                    index: *i,
                    value: p.text(),
                    levels_db,
                    map_db,
                },
                notes,
            ));
        }
        let v = spec.variant(*i, p);
        let steps =
            execute_on(recipe, comps, &comp_unc, Some(&v), limits, files).map_err(within)?;
        Ok((
            SweepRow {
                index: *i,
                value: p.text(),
                levels_db: level_values(&steps).into_iter().map(|(_, l)| l).collect(),
                map_db: Vec::new(),
            },
            Vec::new(),
        ))
    };
    let done = on_threads(&todo, threads, one)?;
    let mut rows = Vec::with_capacity(done.len());
    let mut notes: Vec<String> = Vec::new();
    for (r, n) in done {
        rows.push(r);
        notes.extend(n);
    }
    super::report::dedup(&mut notes);
    Ok(SweepReport {
        name: spec.name().to_string(),
        parameter: spec.parameter(),
        total,
        first: range.start,
        end: range.end,
        columns,
        rows,
        orders: transfer.map(|(sp, _)| sp.order_list()).unwrap_or_default(),
        notes,
    })
}

/// `f` of every item on `threads` threads, each thread a contiguous chunk,
/// the results in the items' order (the first error, in that order, wins).
pub(crate) fn on_threads<I: Sync, T: Send>(
    items: &[I],
    threads: usize,
    f: impl Fn(&I) -> Result<T> + Sync,
) -> Result<Vec<T>> {
    let threads = threads.clamp(1, items.len().max(1));
    if threads == 1 {
        return items.iter().map(f).collect();
    }
    let per = items.len().div_ceil(threads);
    let f = &f;
    let chunks: Vec<Result<Vec<T>>> = std::thread::scope(|sc| {
        let hs: Vec<_> = items
            .chunks(per)
            .map(|c| sc.spawn(move || c.iter().map(f).collect::<Result<Vec<T>>>()))
            .collect();
        hs.into_iter()
            .map(|h| {
                h.join()
                    .unwrap_or_else(|_| Err(Error::internal("a sweep thread panicked")))
            })
            .collect()
    });
    let mut out = Vec::with_capacity(items.len());
    for c in chunks {
        out.extend(c?);
    }
    Ok(out)
}

/// A CSV field, quoted when it holds a comma, a quote or a line break.
fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// A one-line comment value (line breaks would end the comment).
fn one_line(s: &str) -> String {
    s.replace(['\n', '\r'], " ")
}

/// The sweep file ([module docs](self)); `recipe_sha256` is the SHA-256 of
/// the recipe file's bytes.
pub fn sweep_csv(rep: &SweepReport, recipe_sha256: &str) -> String {
    let labels: Vec<String> = rep.columns.iter().map(SweepColumn::label).collect();
    csv_text(rep, recipe_sha256, &labels, |r| &r.levels_db)
}

/// A speed sweep's map, `NAME.map.sweep.csv`: the layout of the sweep file
/// with one column per order and target ("FRF DOF order K [UNIT]", orders
/// ascending, targets within each order), each the level of the line K·s Hz
/// at the row's speed s (empty where the line falls outside the transfer's
/// grid). None for a sweep that is not over speed.
pub fn sweep_map_csv(rep: &SweepReport, recipe_sha256: &str) -> Option<String> {
    if rep.orders.is_empty() {
        return None;
    }
    let labels: Vec<String> = rep
        .orders
        .iter()
        .flat_map(|k| {
            rep.columns
                .iter()
                .map(move |c| format!("{} {} order {k} [{}]", c.step, c.dof, c.unit))
        })
        .collect();
    Some(csv_text(rep, recipe_sha256, &labels, |r| &r.map_db))
}

fn csv_text(
    rep: &SweepReport,
    recipe_sha256: &str,
    labels: &[String],
    values: impl Fn(&SweepRow) -> &[Option<f64>],
) -> String {
    let mut s = String::new();
    s.push_str(SWEEP_CSV_MAGIC);
    s.push('\n');
    s.push_str(&format!("# name: {}\n", one_line(&rep.name)));
    s.push_str(&format!("# parameter: {}\n", one_line(&rep.parameter)));
    s.push_str(&format!("# recipe sha256: {recipe_sha256}\n"));
    s.push_str(&format!(
        "# points: {}..{} of {}\n",
        rep.first, rep.end, rep.total
    ));
    s.push_str("index,value");
    for l in labels {
        s.push(',');
        s.push_str(&field(l));
    }
    s.push('\n');
    for r in &rep.rows {
        s.push_str(&format!("{},{}", r.index, field(&r.value)));
        for l in values(r) {
            s.push(',');
            if let Some(l) = l {
                s.push_str(&format!("{l}"));
            }
        }
        s.push('\n');
    }
    s
}

/// One shard's file, read for [`merge_csv`]: its header lines, slice and rows.
struct ShardFile<'a> {
    name: &'a str,
    /// The comment lines but `points`, and the header row.
    head: Vec<&'a str>,
    sha: &'a str,
    first: usize,
    end: usize,
    total: usize,
    rows: Vec<&'a str>,
}

fn read_shard<'a>(name: &'a str, text: &'a str) -> Result<ShardFile<'a>> {
    let bad = |line: usize, msg: String| Error::parse(msg).in_file(name).at_line(line);
    let lines: Vec<&str> = text.split_terminator('\n').collect();
    if lines.first() != Some(&SWEEP_CSV_MAGIC) {
        return Err(bad(
            1,
            format!("not a sweep file: the first line is not '{SWEEP_CSV_MAGIC}'"),
        ));
    }
    let prefix = |i: usize, p: &str| -> Result<&'a str> {
        lines
            .get(i)
            .and_then(|l| l.strip_prefix(p))
            .ok_or_else(|| bad(i + 1, format!("expected a line '{p}…' here")))
    };
    prefix(1, "# name: ")?;
    prefix(2, "# parameter: ")?;
    let sha = prefix(3, "# recipe sha256: ")?;
    let pts = prefix(4, "# points: ")?;
    let parsed = (|| {
        let (range, total) = pts.split_once(" of ")?;
        let (a, b) = range.split_once("..")?;
        Some((a.parse().ok()?, b.parse().ok()?, total.parse().ok()?))
    })();
    let (first, end, total): (usize, usize, usize) =
        parsed.filter(|(a, b, t)| a <= b && b <= t).ok_or_else(|| {
            bad(
                5,
                format!(
                    "'points: {}': expected A..B of N with A ≤ B ≤ N",
                    quote(pts)
                ),
            )
        })?;
    let header = lines
        .get(5)
        .ok_or_else(|| bad(6, "the header row is missing".into()))?;
    let rows: Vec<&str> = lines[6..].to_vec();
    if rows.len() != end - first {
        return Err(bad(
            6 + rows.len(),
            format!(
                "the file says it holds points {first}..{end} ({} rows) but holds {} rows",
                end - first,
                rows.len()
            ),
        ));
    }
    for (n, r) in rows.iter().enumerate() {
        let idx = r.split(',').next().and_then(|x| x.parse::<usize>().ok());
        if idx != Some(first + n) {
            return Err(bad(
                7 + n,
                format!("expected the row of point {}", first + n),
            ));
        }
    }
    Ok(ShardFile {
        name,
        head: vec![lines[1], lines[2], lines[3], header],
        sha,
        first,
        end,
        total,
        rows,
    })
}

/// **The one rule of folding slices** (files by [`merge_csv`], the page's
/// workers' reports by [`merge_reports`]): the slices (name, first, one past
/// the last), sorted by their first point, cover 0..`total` with no gap and
/// no overlap (empty slices aside). Errors name the slice and the points.
fn check_cover(parts: &[(&str, usize, usize)], total: usize) -> Result<()> {
    let mut at = 0usize;
    let mut prev = "";
    for &(name, first, end) in parts.iter().filter(|p| p.1 < p.2) {
        if first < at {
            return Err(Error::recipe(format!(
                "'{}' holds points {first}..{end}, which overlap points up to {at} of '{}'",
                quote(name),
                quote(prev)
            ))
            .in_file(name));
        }
        if first > at {
            return Err(Error::recipe(format!(
                "points {at}..{first} are missing: no shard holds them"
            )));
        }
        at = end;
        prev = name;
    }
    if at != total {
        return Err(Error::recipe(format!(
            "points {at}..{total} are missing: no shard holds them"
        )));
    }
    Ok(())
}

/// Fold slices of one sweep computed apart (the page's workers, each a
/// [`slice`] of the points) into the report of the whole sweep: the same
/// sweep (name, parameter, columns, orders, number of points), the slices
/// covering every point once ([`check_cover`], as [`merge_csv`]), the rows
/// in point order and the notes once each in the order the whole run meets
/// them. The result equals the report of the sweep computed in one piece.
pub fn merge_reports(mut slices: Vec<SweepReport>) -> Result<SweepReport> {
    if slices.is_empty() {
        return Err(Error::usage("a sweep's merge needs at least one slice"));
    }
    slices.sort_by_key(|s| (s.first, s.end));
    let names: Vec<String> = slices
        .iter()
        .map(|s| format!("slice {}..{}", s.first, s.end))
        .collect();
    let first = &slices[0];
    for (s, n) in slices.iter().zip(&names).skip(1) {
        if s.name != first.name
            || s.parameter != first.parameter
            || s.total != first.total
            || s.columns != first.columns
            || s.orders != first.orders
        {
            return Err(Error::recipe(format!(
                "'{}' and '{}' are of different sweeps (name, parameter, columns or number of points differ)",
                names[0], n
            )));
        }
    }
    for (s, n) in slices.iter().zip(&names) {
        let indices_ok = s.rows.len() == s.end.saturating_sub(s.first)
            && s.rows.iter().zip(s.first..).all(|(r, i)| r.index == i);
        if !indices_ok {
            return Err(Error::recipe(format!(
                "'{n}' holds {} rows, not one for each of its points in order",
                s.rows.len()
            )));
        }
    }
    let parts: Vec<(&str, usize, usize)> = slices
        .iter()
        .zip(&names)
        .map(|(s, n)| (n.as_str(), s.first, s.end))
        .collect();
    check_cover(&parts, first.total)?;
    let mut whole = SweepReport {
        name: first.name.clone(),
        parameter: first.parameter.clone(),
        total: first.total,
        first: 0,
        end: first.total,
        columns: first.columns.clone(),
        rows: Vec::with_capacity(first.total),
        orders: first.orders.clone(),
        notes: Vec::new(),
    };
    for s in slices {
        whole.rows.extend(s.rows);
        whole.notes.extend(s.notes);
    }
    super::report::dedup(&mut whole.notes);
    Ok(whole)
}

/// Check that `rep` is the whole of the recipe's sweep (its name,
/// parameter and every point), as a run given a sweep computed elsewhere
/// ([`super::execute::run_with_sweep`]) requires.
pub(crate) fn check_whole(recipe: &Recipe, rep: &SweepReport) -> Result<()> {
    let spec = recipe
        .sweep
        .as_ref()
        .ok_or_else(|| Error::recipe("the recipe has no \"sweep\" section").field("sweep"))?;
    let total = spec.points(recipe).map_err(|e| e.within("sweep"))?.len();
    if rep.name != spec.name()
        || rep.parameter != spec.parameter()
        || rep.total != total
        || rep.first != 0
        || rep.end != total
        || rep.rows.len() != total
    {
        return Err(Error::internal(format!(
            "the sweep given ('{}', points {}..{} of {}) is not the whole of this recipe's sweep ('{}', {total} points)",
            quote(&rep.name),
            rep.first,
            rep.end,
            rep.total,
            quote(spec.name())
        )));
    }
    Ok(())
}

/// Fold shard files (name, text) into the file of the whole sweep: every
/// shard of the same recipe and sweep, the slices contiguous from 0 to N
/// with no gap or overlap. The result is byte for byte the file an
/// unsharded run writes.
pub fn merge_csv(shards: &[(String, String)]) -> Result<String> {
    if shards.is_empty() {
        return Err(Error::usage("merge needs at least one shard"));
    }
    let mut files = shards
        .iter()
        .map(|(n, t)| read_shard(n, t))
        .collect::<Result<Vec<_>>>()?;
    let first = &files[0];
    for f in &files[1..] {
        if f.sha != first.sha {
            return Err(Error::recipe(format!(
                "shards of different recipes: '{}' has recipe sha256 {} and '{}' has {}",
                quote(first.name),
                first.sha,
                quote(f.name),
                f.sha
            ))
            .in_file(f.name));
        }
        if f.head != first.head || f.total != first.total {
            return Err(Error::recipe(format!(
                "'{}' and '{}' are of different sweeps (name, parameter, columns or number of points differ)",
                quote(first.name),
                quote(f.name)
            ))
            .in_file(f.name));
        }
    }
    let total = first.total;
    files.sort_by_key(|f| (f.first, f.end));
    let parts: Vec<(&str, usize, usize)> = files.iter().map(|f| (f.name, f.first, f.end)).collect();
    check_cover(&parts, total)?;
    let f0 = &files[0];
    let mut s = String::new();
    s.push_str(SWEEP_CSV_MAGIC);
    s.push('\n');
    for (i, l) in f0.head.iter().enumerate() {
        if i == 3 {
            s.push_str(&format!("# points: 0..{total} of {total}\n"));
        }
        s.push_str(l);
        s.push('\n');
    }
    for f in &files {
        for r in &f.rows {
            s.push_str(r);
            s.push('\n');
        }
    }
    Ok(s)
}

/// For a speed sweep with a level at `dof` in `unit` (a path total, else a
/// response): "; loudest in the speed sweep 'NAME' at S rev/s (R rpm): L
/// UNIT", the words the run's headline adds beside that level. None for
/// a parameter sweep or when no point has a level there.
pub(crate) fn loudest_speed(rep: &SweepReport, dof: &str, unit: &str) -> Option<String> {
    if rep.orders.is_empty() {
        return None;
    }
    let has_paths = rep.columns.iter().any(|c| c.op == "paths");
    let j = rep
        .columns
        .iter()
        .position(|c| c.dof == dof && c.unit == unit && (!has_paths || c.op == "paths"))?;
    let (speed, level) = rep
        .rows
        .iter()
        .filter_map(|r| Some((r.value.as_str(), r.levels_db.get(j).copied().flatten()?)))
        .max_by(|a, b| a.1.total_cmp(&b.1))?;
    let rpm = speed.parse::<f64>().ok()? * 60.0;
    Some(format!(
        "; loudest in the speed sweep '{}' at {speed} rev/s ({rpm:.0} rpm): {level:.1} {unit}",
        rep.name
    ))
}

/// Headline lines of a whole sweep: for every path total (else every
/// response), its range over the points and where it is highest.
pub fn sweep_headline(rep: &SweepReport) -> Vec<String> {
    let has_paths = rep.columns.iter().any(|c| c.op == "paths");
    let mut out = Vec::new();
    for (j, c) in rep.columns.iter().enumerate() {
        if has_paths && c.op != "paths" {
            continue;
        }
        let vals: Vec<(&str, f64)> = rep
            .rows
            .iter()
            .filter_map(|r| Some((r.value.as_str(), r.levels_db.get(j).copied().flatten()?)))
            .collect();
        let Some(hi) = vals.iter().max_by(|a, b| a.1.total_cmp(&b.1)) else {
            continue;
        };
        let Some(lo) = vals.iter().min_by(|a, b| a.1.total_cmp(&b.1)) else {
            continue;
        };
        if !rep.orders.is_empty() {
            let rpm = hi.0.parse::<f64>().map(|s| s * 60.0).unwrap_or(f64::NAN);
            out.push(format!(
                "speed sweep '{}' ({} speeds): {} at {} peaks at {} rev/s ({rpm:.0} rpm) with {:.1} {u}; lowest {:.1} {u} at {} rev/s",
                rep.name,
                rep.total,
                c.step,
                c.dof,
                hi.0,
                hi.1,
                lo.1,
                lo.0,
                u = c.unit
            ));
            continue;
        }
        out.push(format!(
            "sweep '{}' of {} over {} points: {} at {} spans {:.1}–{:.1} {u}, highest where the value is {} and lowest where it is {}",
            rep.name,
            rep.parameter,
            rep.total,
            c.step,
            c.dof,
            lo.1,
            hi.1,
            hi.0,
            lo.0,
            u = c.unit
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::recipe::{parse, run_with, MapSource};

    /// The demo's files and its recipe as JSON, with the isolator joints
    /// written as hysteretic springs (so their k and eta can be set) and
    /// the given sweep.
    fn demo(sweep: serde_json::Value) -> (MapSource, serde_json::Value) {
        demo_with(sweep, true)
    }

    /// [`demo`], its isolator joints left measured when `hysteretic` is false.
    fn demo_with(sweep: serde_json::Value, hysteretic: bool) -> (MapSource, serde_json::Value) {
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
        for j in recipe["steps"][0]["joints"]
            .as_array_mut()
            .unwrap()
            .iter_mut()
            .take(if hysteretic { 4 } else { 0 })
        {
            let (a, b) = (j["a"].clone(), j["b"].clone());
            *j = serde_json::json!({"a": a, "b": b, "type": "hysteretic", "k": 4.0e5, "eta": 0.1});
        }
        recipe["sweep"] = sweep;
        (src, recipe)
    }

    fn err_of(sweep: serde_json::Value) -> String {
        let (_, r) = demo(sweep);
        parse(&r.to_string()).unwrap_err().to_string()
    }

    #[test]
    fn log_range_matches_numpy_geomspace() {
        // numpy 2.4.6: np.geomspace(1e5, 1e6, 5).tolist()
        let numpy = [
            100000.0,
            177827.94100389228,
            316227.7660168379,
            562341.3251903491,
            1000000.0,
        ];
        let (_, r) = demo(serde_json::json!({"set_joints": ["mounted#0.k"],
            "from": 1e5, "to": 1e6, "steps": 5, "spacing": "log"}));
        let r = parse(&r.to_string()).unwrap();
        let p = r.sweep.as_ref().unwrap().points(&r).unwrap();
        for (a, b) in p.iter().zip(numpy) {
            let PointValue::Number(a) = a else { panic!() };
            assert!((a - b).abs() <= 1e-14 * b, "{a} {b}");
        }
        // numpy: np.linspace(0.5, 2.0, 4).tolist() == [0.5, 1.0, 1.5, 2.0]
        let (_, r) = demo(serde_json::json!({"scale": "isolator",
            "from": 0.5, "to": 2.0, "steps": 4}));
        let r = parse(&r.to_string()).unwrap();
        let p = r.sweep.as_ref().unwrap().points(&r).unwrap();
        assert_eq!(
            p,
            [0.5, 1.0, 1.5, 2.0].map(PointValue::Number).to_vec(),
            "numpy.linspace"
        );
    }

    #[test]
    fn a_point_equals_the_variant_with_that_value() {
        // the check the sweep's definition gives: point i is the recipe's
        // variant with that value (common practice: the same computation
        // reached two ways)
        let keys = ["mounted#0.k", "mounted#1.k", "mounted#2.k", "mounted#3.k"];
        let (src, mut r) = demo(serde_json::json!({"name": "isolator k", "set_joints": keys,
            "from": 1e5, "to": 1.6e6, "steps": 3, "spacing": "log"}));
        // the middle point, 4e5 (geometric mean of 1e5 and 1.6e6), as a variant
        let k = (1e5f64.ln() + (1.6e6f64.ln() - 1e5f64.ln()) * 0.5).exp();
        let set: serde_json::Map<String, serde_json::Value> =
            keys.iter().map(|s| (s.to_string(), k.into())).collect();
        r["variants"] = serde_json::json!([{"name": "stiffer", "set_joints": set},
                                           {"name": "soft", "scale": {"isolator": 0.5}}]);
        let rec = parse(&r.to_string()).unwrap();
        let res = run_with(&rec, &src, &Limits::default()).unwrap();
        let sw = res.report.sweep.as_ref().unwrap();
        assert_eq!(sw.total, 3);
        let var = level_values(&res.report.variants[0].steps);
        let base = level_values(&res.report.steps);
        assert!(!var.is_empty());
        let mut changed = false;
        for ((v, b), p) in var.iter().zip(&base).zip(&sw.rows[1].levels_db) {
            let (v, b, p) = (v.1.unwrap(), b.1.unwrap(), p.unwrap());
            assert!((v - p).abs() <= 1e-12, "{v} {p}");
            changed |= (b - p).abs() > 0.1;
        }
        // the joints were 4e5 in the baseline: the middle point is the baseline
        assert!(!changed);
        // the outer points differ from the baseline
        let lo = sw.rows[0].levels_db.last().unwrap().unwrap();
        assert!((lo - base.last().unwrap().1.unwrap()).abs() > 0.1);
        assert!(res
            .report
            .headline
            .iter()
            .any(|h| h.contains("sweep 'isolator k'")));
    }

    #[test]
    fn scale_and_swap_points_equal_their_variants() {
        let (mut src, mut r) = demo_with(
            serde_json::json!({"scale": "isolator", "values": [0.5, 1.0]}),
            false,
        );
        let mut iso = r["components"]["isolator"].clone();
        let bytes = src.0["isolator-stiffness.csv"].clone();
        src.0.insert("isolator-b.csv".into(), bytes);
        iso["file"] = "isolator-b.csv".into();
        iso["component"] = "isolator".into();
        r["components"]["isolator_b"] = iso;
        r["variants"] = serde_json::json!([{"name": "soft", "scale": {"isolator": 0.5}}]);
        let rec = parse(&r.to_string()).unwrap();
        let res = run_with(&rec, &src, &Limits::default()).unwrap();
        let sw = res.report.sweep.as_ref().unwrap();
        let var = level_values(&res.report.variants[0].steps);
        for (v, p) in var.iter().zip(&sw.rows[0].levels_db) {
            assert!((v.1.unwrap() - p.unwrap()).abs() <= 1e-12);
        }
        let base = level_values(&res.report.steps);
        for (b, p) in base.iter().zip(&sw.rows[1].levels_db) {
            assert!((b.1.unwrap() - p.unwrap()).abs() <= 1e-12);
        }
        // a swap for a component of the same bytes changes nothing
        let mut r2 = r.clone();
        r2["sweep"] = serde_json::json!({"swap": "isolator", "values": ["isolator_b"]});
        let rec = parse(&r2.to_string()).unwrap();
        let sw = run_sweep(&rec, &src, &Limits::default(), None, 1).unwrap();
        assert_eq!(sw.rows[0].value, "isolator_b");
        for (b, p) in base.iter().zip(&sw.rows[0].levels_db) {
            assert_eq!(b.1, *p);
        }
        // the half-stiffness point moves the levels (the isolator is read)
        let (b, p) = (
            base.last().unwrap().1.unwrap(),
            var.last().unwrap().1.unwrap(),
        );
        assert!((b - p).abs() > 0.1, "{b} {p}");
        // a replacement with other DOFs is refused at its point, named
        r2["sweep"] = serde_json::json!({"swap": "casing", "values": ["wall"]});
        let rec = parse(&r2.to_string()).unwrap();
        let e = run_sweep(&rec, &src, &Limits::default(), None, 1)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("sweep point 0") && e.contains("DOFs differ"),
            "{e}"
        );
    }

    #[test]
    fn the_split_over_threads_changes_nothing() {
        let (src, r) = demo(serde_json::json!({"set_joints": ["mounted#1.eta"],
            "from": 0.02, "to": 0.5, "steps": 5}));
        let rec = parse(&r.to_string()).unwrap();
        let one = run_sweep(&rec, &src, &Limits::default(), None, 1).unwrap();
        let two = run_sweep(&rec, &src, &Limits::default(), None, 2).unwrap();
        let three = run_sweep(&rec, &src, &Limits::default(), None, 3).unwrap();
        assert_eq!(one, two);
        assert_eq!(one, three);
        assert_eq!(sweep_csv(&one, "x"), sweep_csv(&two, "x"));
    }

    #[test]
    fn shards_merge_into_the_whole_file() {
        let (src, r) = demo(serde_json::json!({"scale": "forces",
            "from": 0.5, "to": 2.0, "steps": 7}));
        let rec = parse(&r.to_string()).unwrap();
        let whole = sweep_csv(
            &run_sweep(&rec, &src, &Limits::default(), None, 2).unwrap(),
            "abc",
        );
        assert!(whole.starts_with("# mortise-sweep 1\n"));
        let mut shards = Vec::new();
        for k in [3, 1, 2] {
            let range = slice(7, k, 3).unwrap();
            let s = run_sweep(&rec, &src, &Limits::default(), Some(range), 1).unwrap();
            shards.push((format!("s{k}"), sweep_csv(&s, "abc")));
        }
        assert_eq!(merge_csv(&shards).unwrap(), whole);
        // forces scaled by 2 raise every level by 20·log10(2) dB (levels of
        // a linear response: IEC 61672-1 weights lines, not amplitudes)
        let rows: Vec<Vec<&str>> = whole
            .lines()
            .skip(6)
            .map(|l| l.split(',').collect())
            .collect();
        let (a, b): (f64, f64) = (rows[2][2].parse().unwrap(), rows[6][2].parse().unwrap());
        assert!((b - a - 20.0 * 2f64.log10()).abs() < 1e-9, "{a} {b}");
        // a missing slice, an overlap, another recipe
        let e = merge_csv(&shards[..2]).unwrap_err().to_string();
        assert!(e.contains("missing"), "{e}");
        let mut over = shards.clone();
        over.push(("again".into(), shards[0].1.clone()));
        let e = merge_csv(&over).unwrap_err().to_string();
        assert!(e.contains("overlap"), "{e}");
        let mut other = shards.clone();
        other[1].1 = other[1].1.replace("sha256: abc", "sha256: def");
        let e = merge_csv(&other).unwrap_err().to_string();
        assert!(e.contains("abc") && e.contains("def"), "{e}");
    }

    #[test]
    fn slices_are_contiguous_and_bad_shards_refused() {
        let all: Vec<usize> = (1..=4).flat_map(|k| slice(10, k, 4).unwrap()).collect();
        assert_eq!(all, (0..10).collect::<Vec<_>>());
        assert_eq!(slice(3, 4, 4).unwrap(), 2..3);
        assert!(slice(10, 5, 4).unwrap_err().to_string().contains("5/4"));
        assert!(slice(10, 0, 4).is_err());
        assert!(slice(10, 1, 0).unwrap_err().to_string().contains("N is 0"));
    }

    #[test]
    fn bad_sweeps_are_refused_naming_the_field() {
        for bad in ["-3", "2.5"] {
            let e = err_of(serde_json::json!({"scale": "isolator", "from": 1, "to": 2,
                "steps": serde_json::from_str::<serde_json::Value>(bad).unwrap()}));
            assert!(e.contains("steps: 'steps' is") && e.contains(bad), "{e}");
        }
        let e = err_of(serde_json::json!({"scale": "isolator", "from": 1, "to": 2, "steps": 0}));
        assert!(
            e.contains("sweep") && e.contains("steps") && e.contains("is 0"),
            "{e}"
        );
        let e = err_of(
            serde_json::json!({"scale": "isolator", "from": -1, "to": 2, "steps": 3, "spacing": "log"}),
        );
        assert!(e.contains("'from' is -1") && e.contains("log"), "{e}");
        let e = err_of(serde_json::json!({"set_joints": ["mounted#0.q"], "values": [1.0]}));
        assert!(
            e.contains("mounted#0.q") && e.contains("'q' is not one of them"),
            "{e}"
        );
        let e = err_of(serde_json::json!({"set_joints": ["mounted#4.k"], "values": [1.0]}));
        assert!(e.contains("rigid"), "{e}");
        let e = err_of(serde_json::json!({"set_joints": ["mounted#9.k"], "values": [1.0]}));
        assert!(e.contains("joint 9") && e.contains("8 joint"), "{e}");
        let e = err_of(serde_json::json!({"set_joints": ["mounted#0.k"], "values": [1.0, -3.0]}));
        assert!(e.contains("values[1]") && e.contains("-3"), "{e}");
        let e = err_of(serde_json::json!({"scale": "nothing", "values": [1.0]}));
        assert!(e.contains("'nothing'"), "{e}");
        let e = err_of(serde_json::json!({"swap": "isolator", "values": ["nothing"]}));
        assert!(
            e.contains("values[0]") && e.contains("'nothing' is not a component"),
            "{e}"
        );
        let e = err_of(serde_json::json!({"swap": "isolator", "from": 1, "to": 2, "steps": 2}));
        assert!(
            e.contains("'from' belongs to a range") || e.contains("needs 'values'"),
            "{e}"
        );
        let e = err_of(serde_json::json!({"scale": "isolator", "values": [1.0], "steps": 3}));
        assert!(e.contains("'steps' belongs to a range"), "{e}");
        let e = err_of(serde_json::json!({"scale": "isolator", "swap": "casing", "values": [1.0]}));
        assert!(e.contains("exactly one"), "{e}");
        let e = err_of(serde_json::json!({"scale": "isolator", "valeus": [1.0]}));
        assert!(e.contains("sweep") && e.contains("valeus"), "{e}");
        let e = err_of(
            serde_json::json!({"scale": "isolator", "from": 1, "to": 2, "steps": 3, "spacing": "cubic"}),
        );
        assert!(e.contains("cubic"), "{e}");
        let e = err_of(serde_json::json!({"scale": "isolator", "values": ["big"]}));
        assert!(
            e.contains("values[0]") && e.contains("expected a number"),
            "{e}"
        );

        assert!(
            e.contains("values[0]") && e.contains("expected a number"),
            "{e}"
        );
    }
}
