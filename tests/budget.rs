//! The resource budget (`mortise::limits`): a few kilobytes of recipe or a
//! command line must not make mortise allocate gigabytes or compute for
//! minutes. Every case states a size it does not build: the check refuses
//! it first, naming the entry, the size asked for and the budget. Each test
//! fails without its check (the run would allocate or compute the claimed
//! size, or report a wrapped grid as empty).

mod cli_support;
mod common;

use cli_support::{mortise, sdof, write};
use mortise::error::ErrorKind;
use mortise::io::ExportFormat;
use mortise::limits::Limits;
use mortise::recipe::{self, MapSource};
use mortise::workspace::Workspace;
use serde_json::{json, Value};
use std::time::Instant;

fn recipe(components: Value, steps: Value, outputs: &[&str]) -> String {
    json!({
        "format": "mortise-recipe", "version": 1,
        "components": components, "steps": steps, "outputs": outputs,
    })
    .to_string()
}

fn run_with(text: &str, limits: &Limits) -> mortise::Result<recipe::RunResult> {
    recipe::run_with(&recipe::parse(text)?, &MapSource::default(), limits)
}

fn beam(elements: usize) -> Value {
    json!({"model": "beam", "component": "joist", "young": 1.1e10, "second_moment": 8e-6,
           "density": 450.0, "area": 0.0095, "length": 3.6, "elements": elements,
           "loss_factor": 0.02, "left": "pinned", "right": "pinned"})
}

fn network(masses: usize) -> Value {
    let m: Vec<Value> = (0..masses)
        .map(|i| json!({"node": i.to_string(), "mass": 1.5}))
        .collect();
    let mut l: Vec<Value> = (1..masses)
        .map(|i| json!({"a": (i - 1).to_string(), "b": i.to_string(), "k": 2e5, "c": 5.0}))
        .collect();
    l.push(json!({"a": "0", "k": 1e5}));
    json!({"model": "network", "component": "unit", "masses": m, "links": l})
}

/// The refusal, checked to be a budget error that names `entry`.
fn refused(r: mortise::Result<recipe::RunResult>, entry: &str) -> String {
    let e = match r {
        Ok(_) => panic!("expected a budget error naming {entry}"),
        Err(e) => e,
    };
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
    let t = e.to_string();
    assert!(t.contains(entry), "the error should name {entry}: {t}");
    t
}

// ---- item 3: finite-element models ----

#[test]
fn a_10000_element_beam_is_refused_before_its_dense_matrices_are_built() {
    // 20,002 DOFs: 16 dense 20,002² matrices (51 GB) and ~1.3e14 operations
    let t0 = Instant::now();
    let text = recipe(
        json!({"joist": {"synth": beam(10_000), "grid": {"from": 10, "to": 200, "step": 1}}}),
        json!([]),
        &["joist"],
    );
    let t = refused(run_with(&text, &Limits::default()), "components.joist");
    assert!(t.contains("beam 'joist'"), "{t}");
    assert!(t.contains("10000 elements, 20002 DOFs"), "{t}");
    assert!(t.contains("51.2 GB"), "{t}");
    assert!(t.contains("the budget is 2.1 GB"), "{t}");
    assert!(t.contains("--budget-gb"), "{t}");
    // refused from the description alone: no matrix was built
    assert!(t0.elapsed().as_secs_f64() < 5.0);
}

#[test]
fn the_work_of_a_beam_is_checked_and_the_budget_can_be_raised() {
    // 1000 elements: 2002 DOFs, about 1.3e11 operations (28 s here): over 5e10
    let text = recipe(
        json!({"joist": {"synth": beam(1000), "grid": {"from": 10, "to": 200, "step": 10}}}),
        json!([]),
        &["joist"],
    );
    let t = refused(run_with(&text, &Limits::default()), "components.joist");
    assert!(t.contains("1.3e11 operations"), "{t}");
    assert!(t.contains("--work-budget"), "{t}");
    // a small beam passes the defaults, and fails a lowered work budget
    let small = text.replace("\"elements\":1000", "\"elements\":20");
    assert!(run_with(&small, &Limits::default()).is_ok());
    let low = Limits {
        work: 1e5,
        ..Limits::default()
    };
    refused(run_with(&small, &low), "components.joist");
}

#[test]
fn a_frame_of_many_members_is_checked_as_a_whole() {
    // 60 members of 1000 elements each: the member count multiplies the size
    let nodes: Vec<Value> = (0..61)
        .map(|i| json!({"name": format!("n{i}"), "x": i as f64 * 0.5, "z": 0.0}))
        .collect();
    let members: Vec<Value> = (0..60)
        .map(|i| {
            json!({"a": format!("n{i}"), "b": format!("n{}", i + 1), "elements": 1000,
                        "young": 2.1e11, "second_moment": 1e-8, "density": 7850.0, "area": 1e-4})
        })
        .collect();
    let frame = json!({"model": "frame", "component": "rack", "nodes": nodes, "members": members,
                       "supports": [{"node": "n0", "fixed": ["X", "Z", "RY"]}],
                       "loss_factor": 0.01, "at": ["rack:n60+Z"]});
    let text = recipe(
        json!({"rack": {"synth": frame, "grid": {"from": 10, "to": 100, "step": 10}}}),
        json!([]),
        &["rack"],
    );
    let t = refused(run_with(&text, &Limits::default()), "components.rack");
    // 61 + 60 × 999 nodes, 3 DOFs each
    assert!(t.contains("60 members, 60000 elements, 180003 DOFs"), "{t}");
}

#[test]
fn every_synthesized_model_is_checked() {
    let tiny = Limits {
        memory_bytes: 1000,
        ..Limits::default()
    };
    let grid = json!({"from": 10, "to": 200, "step": 1});
    for (name, model, says) in [
        ("unit", network(3), "network 'unit' (3 masses"),
        (
            "m",
            json!({"model": "modal", "name": "m", "dofs": ["m:1+Z", "m:2+Z"],
                   "modes": [{"freq": 30.0, "zeta": 0.02, "shape": [1.0, 0.5]}]}),
            "modal model 'm' (2 DOFs, 1 modes",
        ),
        (
            "iso",
            json!({"model": "isolator", "name": "iso", "dof": "iso:1+Z",
                   "table": [{"freq": 0.0, "k": 1e5, "eta": 0.1}]}),
            "isolator 'iso' (1 table points on 191 lines)",
        ),
        ("joist", beam(4), "beam 'joist' (4 elements, 10 DOFs"),
    ] {
        let text = recipe(
            json!({name: {"synth": model, "grid": grid}}),
            json!([]),
            &[name],
        );
        assert!(run_with(&text, &Limits::default()).is_ok(), "{name}");
        let t = refused(run_with(&text, &tiny), &format!("components.{name}"));
        assert!(t.contains(says), "{t}");
        assert!(t.contains("the budget is 1 kB"), "{t}");
    }
}

// ---- item 4: lines × outputs × inputs of every set ----

#[test]
fn forty_masses_on_a_million_lines_ask_for_25_6_gb_and_are_refused() {
    let text = recipe(
        json!({"unit": {"synth": network(40), "grid": {"from": 1, "to": 1000000, "step": 1}}}),
        json!([]),
        &["unit"],
    );
    let t = refused(run_with(&text, &Limits::default()), "components.unit");
    assert!(
        t.contains("40 masses, 40 × 40 receptances on 1000000 lines"),
        "{t}"
    );
    assert!(t.contains("25.6 GB"), "{t}");
}

#[test]
fn steps_that_grow_a_set_are_checked_before_they_allocate() {
    let grid = json!({"from": 10, "to": 100, "step": 1});
    let comps = json!({
        "unit": {"synth": network(20), "grid": grid},
        "wall": {"synth": network(20), "grid": grid, "component": "wall"},
    });
    let budget = Limits {
        memory_bytes: 2_000_000,
        ..Limits::default()
    };
    // resample 40 × 40 onto a grid of 100,001 lines: 2.6 GB
    let text = recipe(
        json!({"unit": {"synth": network(40), "grid": grid}}),
        json!([{"id": "fine", "op": "resample", "from": "unit",
                "grid": {"from": 10, "to": 100, "step": 0.0009}}]),
        &["fine"],
    );
    let t = refused(
        run_with(&text, &Limits::default()),
        "steps[0] (id 'fine', op 'resample')",
    );
    assert!(t.contains("100001 lines × 40 outputs × 40 inputs"), "{t}");
    assert!(t.contains("2.6 GB"), "{t}");
    // couple: 91 lines × 40 × 40 = 2.3 MB, over a 2 MB budget
    let text = recipe(
        comps.clone(),
        json!([{"id": "c", "op": "couple", "parts": ["unit", "wall"],
                "joints": [{"a": "unit:0+Z", "b": "wall:0+Z", "type": "rigid"}]}]),
        &["c"],
    );
    let t = refused(run_with(&text, &budget), "steps[0] (id 'c', op 'couple')");
    assert!(t.contains("the coupled set"), "{t}");
    if let Err(e) = run_with(&text, &Limits::default()) {
        panic!("{e}");
    }
    // cascade: the result is held with what the run holds already
    let near = Limits {
        memory_bytes: 1_300_000,
        ..Limits::default()
    };
    let text = recipe(
        comps,
        json!([{"id": "h", "op": "cascade", "first": "unit", "second": "wall"}]),
        &["h"],
    );
    let t = refused(run_with(&text, &near), "steps[0] (id 'h', op 'cascade')");
    assert!(t.contains("the run holds already"), "{t}");
}

#[test]
fn an_inversion_is_checked_against_the_work_budget() {
    let text = recipe(
        json!({"unit": {"synth": network(20), "grid": {"from": 10, "to": 100, "step": 1}}}),
        json!([{"id": "z", "op": "invert", "from": "unit"}]),
        &["z"],
    );
    assert!(run_with(&text, &Limits::default()).is_ok());
    // 91 lines × 64/3 · 20³ ≈ 1.6e7 operations, over 1e7 (the network itself costs ~4.5e6)
    let low = Limits {
        work: 1e7,
        ..Limits::default()
    };
    let t = refused(run_with(&text, &low), "steps[0] (id 'z', op 'invert')");
    assert!(t.contains("inverting 91 lines of 20 × 20"), "{t}");
}

#[test]
fn convert_onto_a_grid_of_9_9_million_lines_is_refused() {
    let d = common::scratch("budget-convert");
    let casing = concat!(env!("CARGO_MANIFEST_DIR"), "/sample-frf/unit-casing.uff");
    // 16 FRFs on 9,900,001 lines: 158 million values, ~20 GB with the text written
    let r = mortise(
        &d,
        &[
            "convert",
            casing,
            "-o",
            "fine.csv",
            "--grid",
            "10:1000:0.0001",
        ],
    );
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(r.stderr.contains("grid of 9900001 lines"), "{}", r.stderr);
    assert!(r.stderr.contains("20.3 GB"), "{}", r.stderr);
    assert!(r.stderr.contains("the budget is 2.1 GB"), "{}", r.stderr);
    assert!(!d.join("fine.csv").exists());
    // one FRF fits the memory, but writing 9.9 million values is over the work budget
    let mut set = sdof("seat", 2.0, 8e4, 40.0, 1000);
    set.freqs = (0..1000).map(|i| 10.0 + i as f64 * 0.99).collect();
    write(&d.join("seat.uff"), &set, ExportFormat::Uff);
    let r = mortise(
        &d,
        &[
            "convert",
            "seat.uff",
            "-o",
            "fine.csv",
            "--grid",
            "10:999:0.0001",
        ],
    );
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(r.stderr.contains("writing 9890001 values"), "{}", r.stderr);
    assert!(r.stderr.contains("--work-budget"), "{}", r.stderr);
    // a lowered budget refuses a small grid; the default takes it
    let small = ["convert", "seat.uff", "-o", "ok.csv", "--grid", "10:999:1"];
    assert_eq!(mortise(&d, &small).code, 0);
    let mut low = small.to_vec();
    low.extend(["--budget-gb", "0.0001"]);
    let r = mortise(&d, &low);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(r.stderr.contains("the budget is 100 kB"), "{}", r.stderr);
}

// ---- item 5: line counts from user numbers ----

#[test]
fn a_step_of_1e_300_says_how_many_lines_it_asks_for() {
    let text = recipe(
        json!({"unit": {"synth": network(2), "grid": {"from": 10, "to": 1000, "step": 1e-300}}}),
        json!([]),
        &["unit"],
    );
    let e = run_with(&text, &Limits::default()).unwrap_err();
    let t = e.to_string();
    assert!(t.contains("components.unit"), "{t}");
    assert!(t.contains("asks for 9.900e302 lines"), "{t}");
    assert!(!t.contains("empty"), "{t}");
    assert_eq!(e.field.as_deref(), Some("grid"));
    // the same in a resample step names the step
    let text = recipe(
        json!({"unit": {"synth": network(2), "grid": {"from": 10, "to": 100, "step": 1}}}),
        json!([{"id": "r", "op": "resample", "from": "unit",
                "grid": {"from": 10, "to": 1e301, "step": 1}}]),
        &["r"],
    );
    let t = run_with(&text, &Limits::default()).unwrap_err().to_string();
    assert!(t.contains("steps[0] (id 'r', op 'resample')"), "{t}");
    assert!(t.contains("asks for 1.000e301 lines"), "{t}");
    // and on the command line
    let d = common::scratch("budget-tiny-step");
    write(
        &d.join("seat.uff"),
        &sdof("seat", 2.0, 8e4, 40.0, 50),
        ExportFormat::Uff,
    );
    let r = mortise(
        &d,
        &[
            "convert",
            "seat.uff",
            "-o",
            "x.csv",
            "--grid",
            "10:1000:1e-300",
        ],
    );
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(
        r.stderr.contains("asks for 9.900e302 lines"),
        "{}",
        r.stderr
    );
}

// ---- item 12: synthesized-component errors carry the component ----

#[test]
fn synthesized_component_errors_name_the_component() {
    let grid = json!({"from": 10, "to": 100, "step": 1});
    let text = recipe(
        json!({"joist": {"synth": beam(0), "grid": grid}}),
        json!([]),
        &["joist"],
    );
    let e = run_with(&text, &Limits::default()).unwrap_err();
    assert!(e.to_string().contains("components.joist"), "{e}");
    assert!(e.message.contains("0 elements"), "{e}");
    let mut bad = network(2);
    bad["masses"][1]["mass"] = json!(-1.0);
    let text = recipe(
        json!({"unit": {"synth": bad, "grid": grid}}),
        json!([]),
        &["unit"],
    );
    let e = run_with(&text, &Limits::default()).unwrap_err();
    assert!(e.to_string().contains("components.unit"), "{e}");
}

// ---- raising and lowering the budget ----

fn small_recipe_dir(name: &str) -> std::path::PathBuf {
    let d = common::scratch(name);
    let text = recipe(
        json!({"unit": {"synth": network(3), "grid": {"from": 10, "to": 100, "step": 1}}}),
        json!([]),
        &["unit"],
    );
    std::fs::write(d.join("r.json"), text).unwrap();
    d
}

#[test]
fn run_takes_budget_options() {
    let d = small_recipe_dir("budget-run");
    let r = mortise(&d, &["run", "r.json", "-o", "out"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let r = mortise(
        &d,
        &["run", "r.json", "-o", "out", "--budget-gb", "0.000002"],
    );
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(r.stderr.contains("components.unit"), "{}", r.stderr);
    assert!(r.stderr.contains("the budget is 2 kB"), "{}", r.stderr);
    let r = mortise(
        &d,
        &[
            "run",
            "r.json",
            "-o",
            "out",
            "--work-budget",
            "1000",
            "--json",
        ],
    );
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert_eq!(r.json()["error"]["kind"], "budget");
    // unusable values are a bad command line
    for (opt, v) in [
        ("--budget-gb", "0"),
        ("--budget-gb", "much"),
        ("--work-budget", "-1"),
    ] {
        let r = mortise(&d, &["run", "r.json", "-o", "out", opt, v]);
        assert_eq!(r.code, 2, "{opt} {v}: {}", r.stderr);
        assert!(r.stderr.contains(opt), "{}", r.stderr);
    }
    // documented in each computing command's help
    for cmd in ["run", "couple", "convert"] {
        let h = mortise(&d, &["help", cmd]).stdout;
        assert!(
            h.contains("--budget-gb X") && h.contains("--work-budget OPS"),
            "{cmd}: {h}"
        );
    }
}

#[test]
fn couple_takes_budget_options() {
    let d = common::scratch("budget-couple");
    write(
        &d.join("a.uff"),
        &sdof("a", 2.0, 8e4, 40.0, 50),
        ExportFormat::Uff,
    );
    write(
        &d.join("b.uff"),
        &sdof("b", 1.0, 3e4, 10.0, 50),
        ExportFormat::Uff,
    );
    let args = [
        "couple",
        "a.uff",
        "b.uff",
        "--join",
        "a:1+Z = b:1+Z",
        "-o",
        "ab.csv",
    ];
    assert_eq!(mortise(&d, &args).code, 0);
    // the parts (100 values, 1.6 kB) fit 3 kB; the coupled set (200 values) does not
    let mut low = args.to_vec();
    low.extend(["--budget-gb", "0.000003"]);
    let r = mortise(&d, &low);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(r.stderr.contains("the coupled set"), "{}", r.stderr);
    assert!(r.stderr.contains("the budget is 3 kB"), "{}", r.stderr);
}

#[test]
fn the_workspace_keeps_its_limits_and_uses_them() {
    let mut ws = Workspace::new();
    let text = recipe(
        json!({"unit": {"synth": network(3), "grid": {"from": 10, "to": 100, "step": 1}}}),
        json!([]),
        &["unit"],
    );
    assert!(ws.run_recipe(&text).is_ok());
    ws.set_limits(Limits::from_json(r#"{"memory_bytes": 1000}"#).unwrap())
        .unwrap();
    ws.clear();
    assert_eq!(ws.limits().memory_bytes, 1000);
    let e = ws.run_recipe(&text).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget);
    assert!(e.to_string().contains("components.unit"), "{e}");
    assert!(ws
        .set_limits(Limits {
            work: f64::NAN,
            ..Limits::default()
        })
        .is_err());
    ws.set_limits(Limits::default()).unwrap();
    assert!(ws.run_recipe(&text).is_ok());
}
