//! The recipe schema as text (`mortise help recipe`), generated from the
//! definitions the parser uses: the component keys, the operations and their
//! operands, the joint types and their parameters.

use super::component::COMPONENT_FIELDS;
use super::joint::{INFERENCE_RULE, JOINT_TYPES};
use super::ops::vocabulary;
use super::{RECIPE_FORMAT, RECIPE_VERSION};
use std::fmt::Write as _;

/// The recipe schema in words.
pub fn schema_help() -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "A recipe is a JSON file:\n\n{{\n  \"format\": \"{RECIPE_FORMAT}\",\n  \"version\": {RECIPE_VERSION},\n  \"title\": \"free text\",\n  \"grid\": {{\"from\": 10, \"to\": 1000, \"step\": 1}},   (default grid of synthesized parts)\n  \"components\": {{ \"NAME\": {{ ... }}, ... }},\n  \"steps\": [ {{ \"id\": \"ID\", \"op\": \"OP\", ...operands... }}, ... ],\n  \"variants\": [ {{ \"name\": \"...\", \"scale\": {{\"NAME\": 0.5}}, \"drop_joints\": [\"STEP_ID#INDEX\"],\n                  \"set_joints\": {{\"STEP_ID#INDEX.FIELD\": 2e5}}, \"swap\": {{\"NAME\": \"OTHER\"}} }} ],\n  \"sweep\": {{ \"set_joints\": [\"STEP_ID#INDEX.k\"], \"from\": 1e5, \"to\": 1e6, \"steps\": 11, \"spacing\": \"log\" }},\n  \"outputs\": [\"ID\", ...]\n}}\n\nEvery key is checked: an unknown key, or an operand of another operation, is an error naming\nthe entry. Components and step results share one namespace; a step may use any name defined\nbefore it. DOF labels are component:node+DIR (DIR one of X Y Z RX RY RZ, sign + or -) or\ncomponent:node for a scalar point."
    );
    let _ = writeln!(s, "\nComponent keys (one of file, inline, synth):");
    for (k, d) in COMPONENT_FIELDS {
        let _ = writeln!(s, "  {k:<10} {d}");
    }
    let _ = writeln!(s, "\nKeys of a component's \"uncertainty\" (one source):");
    for (k, d) in crate::uncertainty::spec::UNCERTAINTY_FIELDS {
        let _ = writeln!(s, "  {k:<10} {d}");
    }
    let _ = writeln!(s, "\nOperations (\"op\"):");
    for op in vocabulary() {
        let _ = writeln!(s, "  {}: {}", op.name, op.summary);
        for o in op.operands {
            let _ = writeln!(
                s,
                "      {:<12} {}{}",
                o.name,
                if o.required { "" } else { "(optional) " },
                o.doc
            );
        }
    }
    let _ = writeln!(
        s,
        "\nJoint types (\"type\" of each entry of \"joints\", beside \"a\" and \"b\"):"
    );
    for t in JOINT_TYPES {
        let params: Vec<String> = t
            .params
            .iter()
            .map(|(n, req, d)| format!("{n}{}: {d}", if *req { "" } else { " (optional)" }))
            .collect();
        let _ = writeln!(
            s,
            "  {:<14} {}{}",
            t.name,
            t.summary,
            if params.is_empty() {
                String::new()
            } else {
                format!("; {}", params.join("; "))
            }
        );
    }
    let _ = writeln!(
        s,
        "  ({INFERENCE_RULE}; the run report notes each such joint.)"
    );
    let _ = writeln!(
        s,
        "\nVariants: 'scale' multiplies a component's or step's values by a factor; 'drop_joints'\nleaves out joints of couple/decouple steps; 'set_joints' sets a joint's parameter\n(\"STEP_ID#INDEX.FIELD\": value, FIELD k, c or eta of the joint's type, SI units); 'swap'\nreplaces a component by another with the same DOFs. Each variant's outputs are written as\n'NAME [variant]', with level changes against the baseline in the report.\n\nOutputs: step ids or component names; a step's extra results (a path analysis's per-path\ncontributions, a blocked-force validation's predicted and measured spectra, in-situ target\npredictions) are written beside it as ID/NAME."
    );
    let _ = writeln!(
        s,
        "\nSweep (optional): the baseline at a list of points over one parameter, each point the\nvariant with that value; every response and path-total level against the parameter, in\nthe report ('sweep') and in NAME.sweep.csv (`mortise run`, `mortise sweep`). Keys:"
    );
    for (k, d) in super::SWEEP_FIELDS {
        let _ = writeln!(s, "  {k:<10} {d}");
    }
    let _ = writeln!(s, "Keys of a sweep's \"speed\":");
    for (k, d) in super::SPEED_FIELDS {
        let _ = writeln!(s, "  {k:<10} {d}");
    }
    let _ = writeln!(
        s,
        "\nTolerances (optional): \"tolerances\": [ {{\"scale\": \"NAME\", \"relative\": 0.15}}, ... ]: parameters\nknown within a tolerance, drawn by the recipe's Monte Carlo (mortise run --monte-carlo N,\nmortise sweep --monte-carlo N) with the components' stated uncertainty; a plain run uses\nthe nominal values and says so. Keys of each entry:"
    );
    for (k, d) in super::TOLERANCE_FIELDS {
        let _ = writeln!(s, "  {k:<12} {d}");
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_every_operation_operand_and_joint_type() {
        let h = schema_help();
        for op in vocabulary() {
            assert!(h.contains(&format!("  {}: ", op.name)), "{}", op.name);
            for o in op.operands {
                assert!(h.contains(o.name), "{}.{}", op.name, o.name);
            }
        }
        for t in JOINT_TYPES {
            assert!(h.contains(t.name), "{}", t.name);
        }
        for (k, _) in COMPONENT_FIELDS {
            assert!(h.contains(k), "{k}");
        }
        for (k, _) in super::super::SWEEP_FIELDS {
            assert!(h.contains(&format!("  {k:<10} ")), "{k}");
        }
        for (k, _) in crate::uncertainty::spec::UNCERTAINTY_FIELDS {
            assert!(h.contains(&format!("  {k:<10} ")), "{k}");
        }
    }
}
