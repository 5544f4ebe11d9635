//! Modal identification steps: `identify-modes` (a modal model from a
//! measured set) and `regenerate` (clean, complete FRFs from it). The
//! computation is `crate::identify`; these steps read their operands,
//! check the budget and put the result in the step's report.

use super::{opt, parse_dofs, req, Ctx, Operand, Operation, StepOutput};
use crate::error::{Error, Result};
use crate::identify::stability::{PoleChoice, Tolerances};
use crate::identify::{self, IdentifyOptions, Pick};
use crate::recipe::report::StepReport;
use crate::recipe::GridSpec;
use serde::{Deserialize, Serialize};

/// Stability tolerances as written in a recipe (each optional).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TolerancesSpec {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub freq: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub damping: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mac: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub orders: Option<usize>,
}

/// Identify a modal model from a measured FRF set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IdentifyModes {
    pub from: String,
    pub band: [f64; 2],
    pub max_order: usize,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub references: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tolerances: Option<TolerancesSpec>,
    /// "auto" or a list of {freq, tol}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pick: Option<serde_json::Value>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub refine: Option<bool>,
}

fn pick_of(v: Option<&serde_json::Value>) -> Result<Pick> {
    match v {
        None => Ok(Pick::Auto),
        Some(serde_json::Value::String(s)) if s == "auto" => Ok(Pick::Auto),
        Some(serde_json::Value::Array(items)) => {
            let mut out = Vec::with_capacity(items.len());
            for (k, it) in items.iter().enumerate() {
                let c: PoleChoice = serde_json::from_value(it.clone()).map_err(|e| {
                    Error::recipe(format!(
                        "{}; expected {{\"freq\": Hz, \"tol\": Hz}}",
                        e.to_string().replace("unknown field", "unknown key")
                    ))
                    .field(format!("pick[{k}]"))
                })?;
                out.push(c);
            }
            Ok(Pick::List(out))
        }
        Some(other) => Err(Error::recipe(format!(
            "'pick' is {}; expected \"auto\" or a list of {{\"freq\": Hz, \"tol\": Hz}}",
            crate::error::quote(&other.to_string())
        ))
        .field("pick")),
    }
}

impl IdentifyModes {
    /// The library's options from the operands (every one used or refused).
    pub fn options(&self, n_in: usize) -> Result<IdentifyOptions> {
        let references = match &self.references {
            Some(r) => Some(parse_dofs(r, "references")?),
            None => None,
        };
        let n_ref = references.as_ref().map_or(n_in, Vec::len);
        let mut tolerances = Tolerances::default();
        if let Some(t) = &self.tolerances {
            if let Some(x) = t.freq {
                tolerances.freq = x;
            }
            if let Some(x) = t.damping {
                tolerances.damping = x;
            }
            if let Some(x) = t.mac {
                if n_ref < 2 {
                    return Err(Error::recipe(format!(
                        "a MAC tolerance compares participation vectors, which a fit with {n_ref} reference has not; remove 'mac' or use at least two references"
                    ))
                    .field("tolerances.mac"));
                }
                tolerances.mac = x;
            }
            if let Some(x) = t.orders {
                if matches!(self.pick.as_ref(), Some(serde_json::Value::Array(_))) {
                    return Err(Error::recipe(
                        "'orders' applies to the automatic choice; the poles here are listed in 'pick'",
                    )
                    .field("tolerances.orders"));
                }
                tolerances.orders = x;
            }
        }
        let pick = pick_of(self.pick.as_ref())?;
        if let Pick::Auto = pick {
            if tolerances.orders > self.max_order {
                return Err(Error::recipe(format!(
                    "max_order {} is below tolerances.orders = {}: no pole could be stable at that many orders",
                    self.max_order, tolerances.orders
                ))
                .field("max_order"));
            }
        }
        Ok(IdentifyOptions {
            band: self.band,
            max_order: self.max_order,
            references,
            tolerances,
            pick,
            refine: self.refine.unwrap_or(true),
        })
    }
}

impl Operation for IdentifyModes {
    const SUMMARY: &'static str =
        "identify a modal model (poles, complex mode shapes, residual terms) from a measured motion-per-force set in a band; the result is the fit on the band's lines, the model and its quality in the report";
    const OPERANDS: &'static [Operand] = &[
        req("from", "name of the measured set (receptance, mobility or accelerance)"),
        req("band", "[low, high] Hz: the band fitted (above 0 Hz, inside the set's grid)"),
        req("max_order", "highest model order of the pole estimate (orders 1 to max_order are computed for the stabilization table)"),
        opt("references", "input DOF labels used as references of the pole estimate (default: every input)"),
        opt("tolerances", "{freq, damping, mac, orders}: a pole is stable when frequency and damping change by at most freq (default 0.01) and damping (0.05) relative, and its participation vector has MAC ≥ mac (0.98) with the previous order's; chosen automatically when stable at ≥ orders (5) orders (defaults: common practice)"),
        opt("pick", "\"auto\" (default) or a list of {freq, tol} in Hz: the pole nearest each frequency within ± tol, stable ones first"),
        opt("refine", "true (default): refine the chosen poles against the FRFs by nonlinear least squares; false: keep the poles of the stabilization table"),
    ];
    fn reads(&self) -> Vec<&str> {
        vec![self.from.as_str()]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let s = cx.get("from", &self.from)?;
        let opts = self.options(s.n_in())?;
        let id = identify::identify(s, &opts, cx.limits)?;
        let lines: Vec<f64> = s
            .freqs
            .iter()
            .copied()
            .filter(|f| *f >= opts.band[0] && *f <= opts.band[1])
            .collect();
        cx.check_set("the fitted set", lines.len(), s.n_out(), s.n_in())?;
        let regen = identify::regenerate(&id, &lines, false)?;
        let mut report = StepReport::new(cx.id, "identify-modes", regen.set.warnings.clone());
        for f in id.fits.iter().filter(|f| f.poor) {
            report.warnings.push(format!(
                "poor fit of {}/{}: correlation {:.4} (flagged below {}), error {:.1} % over the band (flagged above {} %; common practice)",
                f.output,
                f.input,
                f.correlation,
                identify::quality::CORRELATION_MIN,
                100.0 * f.error,
                100.0 * identify::quality::ERROR_MAX
            ));
        }
        report.notes.extend(id.model_notes.iter().cloned());
        report.notes.extend(
            id.chosen
                .iter()
                .map(|c| format!("{:.4} Hz: {}", c.freq, c.reason)),
        );
        report.identification = Some(Box::new(id));
        Ok(StepOutput {
            set: regen.set,
            extras: Vec::new(),
            report,
        })
    }
}

/// FRFs synthesized from an identified model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Regenerate {
    pub from: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grid: Option<GridSpec>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fill_missing: Option<bool>,
}

impl Operation for Regenerate {
    const SUMMARY: &'static str =
        "synthesize FRFs from an identify-modes step's model on a grid inside its fitted band (outside is refused), in the measured kind, optionally filling the entries that were not measured";
    const OPERANDS: &'static [Operand] = &[
        req("from", "id of an earlier identify-modes step"),
        opt("grid", "{from, to, step} or {lines: [...]}, Hz, inside the fitted band (default: the band's measured lines)"),
        opt("fill_missing", "true: fill the entries missing from the measured set from the mode shapes (needs a driving point; each filled entry is named in the warnings); false (default): they stay missing"),
    ];
    fn reads(&self) -> Vec<&str> {
        vec![self.from.as_str()]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let Some(id) = cx
            .steps
            .iter()
            .rev()
            .find(|r| r.id == self.from)
            .and_then(|r| r.identification.as_deref())
        else {
            return Err(Error::recipe(format!(
                "'from' names '{}', which is not an earlier identify-modes step",
                self.from
            ))
            .field("from"));
        };
        if let Some(v) = cx.variant.filter(|v| v.scale.contains_key(&self.from)) {
            return Err(Error::recipe(format!(
                "variant '{}' scales step '{}', whose model this step reads unscaled; scale this step instead",
                v.name, self.from
            ))
            .field("from"));
        }
        let lines = match &self.grid {
            Some(g) => g.lines().map_err(|e| e.field("grid"))?,
            None => cx.get("from", &self.from)?.freqs.clone(),
        };
        let (no, ni) = (id.outputs.len(), id.inputs.len());
        cx.check_set("the regenerated set", lines.len(), no, ni)?;
        let n = (no + ni) as f64;
        cx.check_work(
            &format!(
                "the regeneration ({} lines, {} modes, {} DOFs)",
                lines.len(),
                id.modes.len(),
                no + ni
            ),
            lines.len() as f64 * (id.modes.len() as f64 + 1.0) * n * n * 16.0,
        )?;
        let r = identify::regenerate(id, &lines, self.fill_missing.unwrap_or(false))?;
        let mut out = StepOutput::plain(cx, "regenerate", r.set);
        out.report.filled = r
            .filled_at
            .iter()
            .zip(&r.filled)
            .map(|(&(o, i), label)| crate::recipe::report::FilledEntry {
                output: o,
                input: i,
                label: label.clone(),
            })
            .collect();
        if !r.filled.is_empty() {
            out.report.notes.push(format!(
                "filled from the mode shapes: {}",
                r.filled.join(", ")
            ));
        }
        Ok(out)
    }
}

/// The `pick` operand after a click on the pole `order`/`index` of an
/// identification's chart (the page's fitting view): `current` is the
/// step's `pick` as the recipe has it (absent or "auto": the automatic
/// choice, which the list starts from), the rule
/// [`crate::identify::stability::toggle_pick`]. Returns the new list, as
/// the recipe writes it, and whether the pole's mode was added.
pub fn pick_toggled(
    id: &identify::Identification,
    current: Option<&serde_json::Value>,
    order: usize,
    index: usize,
) -> Result<(serde_json::Value, bool)> {
    let pole = id
        .chart
        .iter()
        .find(|o| o.order == order)
        .and_then(|o| o.poles.get(index))
        .ok_or_else(|| {
            Error::usage(format!(
                "the chart of '{}' has no pole {index} at order {order}",
                id.set
            ))
            .field("pole")
        })?;
    let list = match pick_of(current)? {
        Pick::Auto => None,
        Pick::List(l) => Some(l),
    };
    let (next, added) =
        identify::stability::toggle_pick(list.as_deref(), &id.chosen, pole.freq, &id.tolerances)?;
    let v = serde_json::to_value(&next)
        .map_err(|e| Error::internal(format!("cannot encode the pick list: {e}")))?;
    Ok((v, added))
}

/// The modes an identification chose, as a `pick` list (an automatic
/// choice written out, to be edited).
pub fn pick_written(id: &identify::Identification) -> Result<serde_json::Value> {
    serde_json::to_value(identify::stability::choices_of(&id.chosen, &id.tolerances))
        .map_err(|e| Error::internal(format!("cannot encode the pick list: {e}")))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::identify::stability::{ChartOrder, ChartPole, Chosen};

    fn id_with(poles: &[(usize, f64)], chosen: &[f64]) -> identify::Identification {
        let mut orders: Vec<ChartOrder> = Vec::new();
        for &(o, f) in poles {
            let p = ChartPole {
                freq: f,
                zeta: 0.01,
                stable_freq: true,
                stable_damping: true,
                stable_vector: None,
                mac_previous: None,
                picked: false,
                participation: Vec::new(),
            };
            match orders.iter_mut().find(|x| x.order == o) {
                Some(x) => x.poles.push(p),
                None => orders.push(ChartOrder {
                    order: o,
                    poles: vec![p],
                    note: None,
                }),
            }
        }
        let v = serde_json::json!({
            "set": "m", "band": [10.0, 300.0], "lines": 10, "outputs": [], "inputs": [],
            "references": [], "pole_outputs": [], "out_qty": "acceleration", "in_qty": "force",
            "present": [], "max_order": 10, "tolerances": {}, "pick": "auto", "chosen": [],
            "modes": [], "entries": [], "auto_mac": [], "fits": [], "chart": [], "sum_magnitude": []
        });
        let mut id: identify::Identification = serde_json::from_value(v).unwrap();
        id.chart = orders;
        id.chosen = chosen
            .iter()
            .map(|&f| Chosen {
                freq: f,
                zeta: 0.01,
                order: 10,
                stable_orders: vec![],
                freq_spread: 0.0,
                damping_spread: 0.0,
                reason: String::new(),
            })
            .collect();
        id
    }

    #[test]
    fn a_click_toggles_the_pole_in_the_recipe_pick() {
        let id = id_with(&[(9, 42.0), (10, 42.01), (10, 77.0)], &[42.01]);
        // automatic choice: the list starts from its modes, 77 Hz is added
        let (v, added) = pick_toggled(&id, None, 10, 1).unwrap();
        assert!(added);
        assert_eq!(
            v,
            serde_json::json!([{"freq": 42.01, "tol": 0.42}, {"freq": 77.0, "tol": 0.77}])
        );
        // the recipe reads the list back: it is a valid operand
        assert!(matches!(pick_of(Some(&v)).unwrap(), Pick::List(l) if l.len() == 2));
        // the 42 Hz pole of order 9 is the same column: removed
        let (v, added) = pick_toggled(&id, Some(&v), 9, 0).unwrap();
        assert!(!added);
        assert_eq!(v, serde_json::json!([{"freq": 77.0, "tol": 0.77}]));
        let e = pick_toggled(&id, None, 3, 0).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("pole"));
        assert_eq!(
            pick_written(&id).unwrap(),
            serde_json::json!([{"freq": 42.01, "tol": 0.42}])
        );
    }
}
