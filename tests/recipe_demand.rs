//! Demand-driven evaluation through a recipe: the demo's coupling is read
//! only by a `select` of 4 anchors × 4 seats, so the couple step computes
//! those rows and columns (with the interface DOFs) instead of the whole
//! coupled matrix. Reference: the same recipe with the coupling among the
//! requested outputs, which makes the step compute the whole matrix; every
//! other file written (values, uncertainties, report levels) must be
//! identical, byte for byte.

mod common;

use serde_json::Value;
use std::time::Instant;

fn cli(args: &[&str]) -> String {
    let v: Vec<String> = args.iter().map(|s| s.to_string()).collect();
    mortise::cli::run_cli(&v).unwrap()
}

#[test]
fn a_coupling_read_only_by_selects_computes_what_they_read_and_the_same_bits() {
    let dir = common::scratch("recipe_demand");
    let input = dir.join("in");
    cli(&["demo", "-o", input.to_str().unwrap()]);
    let demo = input.join("heat-pump.recipe.json");
    let mut r: Value = serde_json::from_str(&std::fs::read_to_string(&demo).unwrap()).unwrap();
    // the variant and the sweep run the steps again; one run shows it
    r.as_object_mut().unwrap().remove("variants");
    r.as_object_mut().unwrap().remove("sweep");
    let lean = input.join("lean.recipe.json");
    std::fs::write(&lean, serde_json::to_string_pretty(&r).unwrap()).unwrap();
    r["outputs"].as_array_mut().unwrap().push("mounted".into());
    let whole = input.join("whole.recipe.json");
    std::fs::write(&whole, serde_json::to_string_pretty(&r).unwrap()).unwrap();

    let (a, b) = (dir.join("demand"), dir.join("whole"));
    let t0 = Instant::now();
    cli(&["run", lean.to_str().unwrap(), "-o", a.to_str().unwrap()]);
    let t_demand = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    cli(&["run", whole.to_str().unwrap(), "-o", b.to_str().unwrap()]);
    let t_whole = t0.elapsed().as_secs_f64();
    eprintln!("demo run: demand-driven {t_demand:.3} s, whole coupling {t_whole:.3} s");

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
            "{name} differs between the demand-driven and the whole run"
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
    let notes = step(&ra, "mounted")["notes"].to_string();
    assert!(notes.contains("computed 4 × 4 of the"), "{notes}");
    assert!(!step(&rb, "mounted")["notes"]
        .to_string()
        .contains("computed 4 × 4"));
    assert_eq!(
        step(&ra, "bedroom")["levels"],
        step(&rb, "bedroom")["levels"]
    );
    assert_eq!(
        step(&ra, "mounted")["interface"]["condition"],
        step(&rb, "mounted")["interface"]["condition"]
    );
}
