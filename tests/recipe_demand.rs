//! Demand-driven evaluation through a recipe: the demo's coupling is read
//! only by a `select` of 4 anchors × 4 seats, so the couple step computes
//! those rows and columns (with the interface DOFs) instead of the whole
//! coupled matrix; a decoupling read by a select, and a chain of two
//! cascades read by a select of two columns, likewise. Reference: the same
//! recipe with those steps among the requested outputs, which makes each
//! compute its whole result; every other file written (values,
//! uncertainties, report levels) must be identical, byte for byte (the
//! invariant: a demand-driven step holds the whole result's entries).

mod common;

use serde_json::Value;
use std::time::Instant;

fn cli(args: &[&str]) -> String {
    let v: Vec<String> = args.iter().map(|s| s.to_string()).collect();
    mortise::cli::run_cli(&v).unwrap()
}

fn demo_recipe(dir: &std::path::Path) -> Value {
    let input = dir.join("in");
    cli(&["demo", "-o", input.to_str().unwrap()]);
    let demo = input.join("heat-pump.recipe.json");
    let mut r: Value = serde_json::from_str(&std::fs::read_to_string(&demo).unwrap()).unwrap();
    // the variant and the sweep run the steps again; one run shows it
    r.as_object_mut().unwrap().remove("variants");
    r.as_object_mut().unwrap().remove("sweep");
    r
}

/// Run `r` as it is and with `whole` added to its outputs (each of those
/// steps then computes its whole result); every file but the report must
/// be byte-identical, each step of `notes` must say in the demand-driven
/// report what it computed (and not in the other), and the levels and
/// condition numbers must be equal. Returns both reports.
fn same_bits(dir: &std::path::Path, tag: &str, r: &Value, whole: &[&str], notes: &[(&str, &str)]) {
    let input = dir.join("in");
    let lean = input.join(format!("{tag}-lean.recipe.json"));
    std::fs::write(&lean, serde_json::to_string_pretty(r).unwrap()).unwrap();
    let mut w = r.clone();
    for id in whole {
        w["outputs"].as_array_mut().unwrap().push((*id).into());
    }
    let wfile = input.join(format!("{tag}-whole.recipe.json"));
    std::fs::write(&wfile, serde_json::to_string_pretty(&w).unwrap()).unwrap();

    let (a, b) = (
        dir.join(format!("{tag}-demand")),
        dir.join(format!("{tag}-whole")),
    );
    let t0 = Instant::now();
    cli(&["run", lean.to_str().unwrap(), "-o", a.to_str().unwrap()]);
    let t_demand = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    cli(&["run", wfile.to_str().unwrap(), "-o", b.to_str().unwrap()]);
    let t_whole = t0.elapsed().as_secs_f64();
    eprintln!("{tag} run: demand-driven {t_demand:.3} s, whole {t_whole:.3} s");

    let mut compared = 0;
    for e in std::fs::read_dir(&a).unwrap() {
        let name = e.unwrap().file_name().into_string().unwrap();
        if name == "report.json" || name.ends_with(".svg") {
            continue;
        }
        let x = std::fs::read(a.join(&name)).unwrap();
        let y = std::fs::read(b.join(&name)).unwrap_or_else(|_| panic!("{name} in both runs"));
        assert!(
            x == y,
            "{tag}: {name} differs between the demand-driven and the whole run"
        );
        compared += 1;
    }
    assert!(compared >= 8, "{compared} files compared");
    // the report says what was computed; its levels are the same
    let report = |d: &std::path::Path| -> Value {
        serde_json::from_str(&std::fs::read_to_string(d.join("report.json")).unwrap()).unwrap()
    };
    let (ra, rb) = (report(&a), report(&b));
    let step = |r: &Value, id: &str| {
        r["steps"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["id"] == id)
            .unwrap()
            .clone()
    };
    for (id, what) in notes {
        let n = step(&ra, id)["notes"].to_string();
        assert!(n.contains(what), "{tag}: {id}: {n}");
        assert!(
            !step(&rb, id)["notes"].to_string().contains("computed "),
            "{tag}: {id}"
        );
    }
    assert_eq!(
        step(&ra, "bedroom")["levels"],
        step(&rb, "bedroom")["levels"]
    );
    for id in ["mounted", "freed"] {
        if ra["steps"]
            .as_array()
            .unwrap()
            .iter()
            .any(|s| s["id"] == id)
        {
            assert_eq!(
                step(&ra, id)["interface"]["condition"],
                step(&rb, id)["interface"]["condition"]
            );
        }
    }
}

#[test]
fn a_coupling_read_only_by_selects_computes_what_they_read_and_the_same_bits() {
    let dir = common::scratch("recipe_demand");
    let mut r = demo_recipe(&dir);
    // the seats-to-bed chain of two cascades read by a select of two seats
    r["steps"]
        .as_array_mut()
        .unwrap()
        .push(serde_json::json!({"id": "bed_pick",
        "op": "select", "from": "seat_to_bed", "inputs": ["casing:103+Z", "casing:101+Z"]}));
    r["outputs"].as_array_mut().unwrap().push("bed_pick".into());
    same_bits(
        &dir,
        "demo",
        &r,
        &["mounted", "seat_to_bed", "seat_to_wall_force"],
        &[
            // 4 anchors × 4 seats read by seat_to_anchor
            ("mounted", "computed 4 × 4 of the"),
            (
                "seat_to_bed",
                "computed 1 × 2 of the 1 × 2 its operands give",
            ),
            // the demand passed on by the cascade that reads it
            (
                "seat_to_wall_force",
                "computed 4 × 2 of the 4 × 4 its operands give",
            ),
        ],
    );

    // the wall taken off the assembly again (a copy of its FRFs under
    // another component name, joined rigidly at the anchors), read by a
    // select; the decoupling reads the whole coupling
    let mut copy = r["components"]["wall"].clone();
    copy["component"] = "w2".into();
    r["components"]["wall_copy"] = copy;
    let anchors: Vec<Value> = (1..=4)
        .map(|k| serde_json::json!({"a": format!("wall:a{k}+X"), "b": format!("w2:a{k}+X"), "type": "rigid"}))
        .collect();
    let steps = r["steps"].as_array_mut().unwrap();
    steps.push(
        serde_json::json!({"id": "freed", "op": "decouple", "assembly": "mounted",
        "remove": "wall_copy", "joints": anchors}),
    );
    steps.push(
        serde_json::json!({"id": "freed_pick", "op": "select", "from": "freed",
        "outputs": ["casing:104+Z", "bracket:1+Z"], "inputs": ["casing:102+Z"]}),
    );
    r["outputs"]
        .as_array_mut()
        .unwrap()
        .push("freed_pick".into());
    same_bits(
        &dir,
        "decoupled",
        &r,
        &["freed"],
        &[("freed", "computed 2 × 1 of the")],
    );
}
