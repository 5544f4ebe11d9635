//! What later steps read of a coupling: demand-driven evaluation.
//!
//! A `couple` step whose result is read only by `select` steps that name
//! both their outputs and their inputs needs only those rows and columns;
//! [`crate::assemble::couple_requested`] computes them, bit for bit the
//! entries of the whole coupling (see that module). Anything else that
//! reads the step (another operation, a `select` keeping every output or
//! every input, the recipe's `outputs`, a speed sweep's transfer) asks for
//! the whole matrix, and so does a step no one reads. The analysis is
//! conservative: when in doubt, the whole matrix.

use super::ops::{parse_dofs, Op};
use super::Recipe;
use crate::assemble::Request;
use crate::error::Result;
use crate::frf::Dof;
use std::collections::BTreeMap;

/// The rows and columns each demand-driven `couple` step must compute, by
/// step id (steps not listed compute their whole result).
pub(crate) fn requests(recipe: &Recipe) -> Result<BTreeMap<String, Request>> {
    let mut out = BTreeMap::new();
    for (n, step) in recipe.steps.iter().enumerate() {
        if !matches!(step.op, Op::Couple(_)) {
            continue;
        }
        let id = step.id.as_str();
        let whole = recipe.outputs.iter().any(|o| o == id)
            || recipe
                .sweep
                .as_ref()
                .and_then(|s| s.speed.as_ref())
                .is_some_and(|sp| sp.frf == id);
        if whole {
            continue;
        }
        let mut req = Request::default();
        let mut readers = 0usize;
        let mut partial = true;
        for later in &recipe.steps[n + 1..] {
            if !later.op.reads().contains(&id) {
                continue;
            }
            readers += 1;
            match &later.op {
                Op::Select(s) if s.from == id => {
                    let (Some(o), Some(i)) = (&s.outputs, &s.inputs) else {
                        partial = false;
                        break;
                    };
                    add(&mut req.outputs, parse_dofs(o, "outputs")?);
                    add(&mut req.inputs, parse_dofs(i, "inputs")?);
                }
                _ => {
                    partial = false;
                    break;
                }
            }
        }
        if partial && readers > 0 {
            out.insert(id.to_string(), req);
        }
    }
    Ok(out)
}

/// Append the labels not yet in `to` (same place and sign), in order.
fn add(to: &mut Vec<Dof>, labels: Vec<Dof>) {
    for d in labels {
        if !to.contains(&d) {
            to.push(d);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn recipe(steps: serde_json::Value, outputs: &[&str]) -> Recipe {
        let v = serde_json::json!({
            "format": "mortise-recipe", "version": 1,
            "components": {
                "a": {"file": "a.csv"}, "b": {"file": "b.csv"}
            },
            "steps": steps,
            "outputs": outputs,
        });
        crate::recipe::parse(&v.to_string()).unwrap()
    }

    fn couple() -> serde_json::Value {
        serde_json::json!({"id": "ab", "op": "couple", "parts": ["a", "b"],
            "joints": [{"a": "a:2+Z", "b": "b:1+Z", "type": "rigid"}]})
    }

    #[test]
    fn selects_naming_both_sides_ask_for_their_union() {
        let r = recipe(
            serde_json::json!([couple(),
                {"id": "s1", "op": "select", "from": "ab", "outputs": ["b:3+Z"], "inputs": ["a:1+Z"]},
                {"id": "s2", "op": "select", "from": "ab", "outputs": ["b:3+Z", "b:2+Z"], "inputs": ["a:1-Z"]}]),
            &["s1", "s2"],
        );
        let q = requests(&r).unwrap();
        let req = &q["ab"];
        let labels = |v: &[Dof]| v.iter().map(|d| d.to_string()).collect::<Vec<_>>();
        assert_eq!(labels(&req.outputs), ["b:3+Z", "b:2+Z"]);
        // a sign-flipped label is its own column (select flips the sign)
        assert_eq!(labels(&req.inputs), ["a:1+Z", "a:1-Z"]);
    }

    #[test]
    fn any_other_reader_or_an_output_asks_for_the_whole() {
        let sel = serde_json::json!({"id": "s", "op": "select", "from": "ab",
            "outputs": ["b:3+Z"], "inputs": ["a:1+Z"]});
        // the coupling is an output itself
        let r = recipe(serde_json::json!([couple(), sel.clone()]), &["ab", "s"]);
        assert!(requests(&r).unwrap().is_empty());
        // a select keeping every input
        let r = recipe(
            serde_json::json!([couple(), {"id": "s", "op": "select", "from": "ab", "outputs": ["b:3+Z"]}]),
            &["s"],
        );
        assert!(requests(&r).unwrap().is_empty());
        // another operation reads it
        let r = recipe(
            serde_json::json!([couple(), sel.clone(),
                {"id": "m", "op": "convert", "from": "ab", "kind": "mobility"}]),
            &["s", "m"],
        );
        assert!(requests(&r).unwrap().is_empty());
        // no one reads it
        let r = recipe(serde_json::json!([couple()]), &[]);
        assert!(requests(&r).unwrap().is_empty());
    }
}
