//! The virtual point transformation (`to-virtual-points`) against outside
//! references.
//!
//! tests/py/vpt_block.py models two rigid blocks (mass, centre of gravity,
//! inertia tensor: the 6 × 6 rigid-body mass matrix, rigid-body kinematics,
//! textbook) on springs to flexible lumped frames in numpy, solves the full
//! models per line, and makes the measured FRFs of three tri-axial sensors
//! (one rotated) and nine impacts (several oblique) on each block by exact
//! kinematics. References: numpy's direct 6 × 6 accelerance at the block's
//! reference point; numpy's direct assembly of both models for the coupled
//! case; a numpy implementation of the published formulas (van der Seijs,
//! van den Bosch, Rixen, de Klerk, COMPDYN 2013) for T_u and T_f; numpy's
//! consistencies of noisy data with the definitions of src/vpt/consistency.rs.

mod common;
mod couple_support;

use couple_support::{freqs_of, set_from_json};
use mortise::io::ExportFormat;
use mortise::limits::Limits;
use mortise::vpt::{self, Geometry, VirtualPointDef};
use mortise::{DirSource, ErrorKind, FrfSet, MapSource};
use serde_json::{json, Value};
use std::path::PathBuf;
use std::sync::OnceLock;

struct Setup {
    dir: PathBuf,
    doc: Value,
    freqs: Vec<f64>,
}

fn setup() -> &'static Setup {
    static S: OnceLock<Setup> = OnceLock::new();
    S.get_or_init(|| {
        let dir = common::scratch("vpt_transform");
        let said = common::run_py("vpt_block.py", &[dir.to_str().unwrap()]);
        assert!(said.contains("vpt: min rho_u"), "{said}");
        let doc: Value =
            serde_json::from_str(&std::fs::read_to_string(dir.join("vpt.json")).unwrap()).unwrap();
        let freqs = freqs_of(&doc);
        for comp in ["unit", "bracket"] {
            let s = set_from_json(&doc[comp]["set"], &freqs);
            let bytes = mortise::save(&[s], ExportFormat::Csv).unwrap();
            std::fs::write(dir.join(format!("{comp}.csv")), bytes).unwrap();
            std::fs::write(
                dir.join(format!("{comp}.geom.csv")),
                doc[format!("geometry_{comp}")].as_str().unwrap(),
            )
            .unwrap();
        }
        let noisy = set_from_json(&doc["noisy"], &freqs);
        std::fs::write(
            dir.join("noisy.csv"),
            mortise::save(&[noisy], ExportFormat::Csv).unwrap(),
        )
        .unwrap();
        Setup { dir, doc, freqs }
    })
}

fn point(doc: &Value, comp: &str) -> Value {
    json!({
        "name": "bolt",
        "origin": [0.0, 0.0, 0.0],
        "sensors": doc[format!("sensors_{comp}")],
        "impacts": doc[format!("impacts_{comp}")],
    })
}

fn vp_step(id: &str, from: &str, geometry: Value, points: Value) -> Value {
    json!({"id": id, "op": "to-virtual-points", "from": from, "geometry": geometry, "points": points})
}

fn recipe(steps: Vec<Value>, outputs: &[&str], comps: &[(&str, &str)]) -> String {
    let mut c = serde_json::Map::new();
    for (name, file) in comps {
        c.insert(name.to_string(), json!({"file": file}));
    }
    json!({
        "format": "mortise-recipe", "version": 1,
        "components": c, "steps": steps, "outputs": outputs
    })
    .to_string()
}

fn run(text: &str) -> mortise::Result<mortise::RunResult> {
    let r = mortise::parse_recipe(text)?;
    let src = DirSource::confined(setup().dir.clone(), Limits::default());
    mortise::run_recipe(&r, &src)
}

/// Largest difference relative to each entry's own largest magnitude over
/// the lines (translations and rotations have different units, so a per-line
/// maximum would hide the small blocks), DOFs matched by label.
fn entrywise_rel_diff(a: &FrfSet, b: &FrfSet) -> f64 {
    assert_eq!(a.n_lines(), b.n_lines());
    let mut worst: f64 = 0.0;
    for (j, din) in b.inputs.iter().enumerate() {
        let ja = a.in_index(din).unwrap_or_else(|| panic!("no input {din}"));
        for (i, dout) in b.outputs.iter().enumerate() {
            let ia = a
                .out_index(dout)
                .unwrap_or_else(|| panic!("no output {dout}"));
            let scale = (0..b.n_lines())
                .map(|k| b.get(k, i, j).norm())
                .fold(0.0, f64::max);
            for k in 0..b.n_lines() {
                worst = worst.max((a.get(k, ia, ja) - b.get(k, i, j)).norm() / scale);
            }
        }
    }
    worst
}

fn vp_report(r: &mortise::RunResult, step: &str) -> Vec<vpt::VirtualPointReport> {
    r.report
        .steps
        .iter()
        .find(|s| s.id == step)
        .and_then(|s| s.virtual_points.clone())
        .expect("the step reports its virtual points")
}

#[test]
fn rigid_block_gives_the_reference_point_frfs() {
    let s = setup();
    let text = recipe(
        vec![vp_step(
            "vp",
            "unit",
            json!("unit.geom.csv"),
            json!([point(&s.doc, "unit")]),
        )],
        &["vp"],
        &[("unit", "unit.csv")],
    );
    let r = run(&text).unwrap();
    let got = &r.outputs[0];
    let want = set_from_json(&s.doc["unit"]["reference"], &s.freqs);
    // kept frame DOFs first, then the point's six, as numpy's reference
    assert_eq!(got.outputs, want.outputs);
    assert_eq!(got.inputs, want.inputs);
    let d = entrywise_rel_diff(got, &want);
    eprintln!("rigid block: virtual-point FRFs against numpy's direct 6 × 6 at o: {d:e}");
    // reference: numpy full model solve (rigid-body kinematics, textbook)
    assert!(d <= 1e-10, "relative difference {d:e}");
    let p = &vp_report(&r, "vp")[0];
    assert_eq!(p.name, "unit:bolt");
    let worst_u = p.worst_sensor_consistency.unwrap();
    let worst_f = p.worst_impact_consistency.unwrap();
    eprintln!(
        "rigid block: consistencies 1 − {:e} (sensors), 1 − {:e} (impacts)",
        1.0 - worst_u,
        1.0 - worst_f
    );
    for v in p
        .sensor_consistency
        .iter()
        .chain(&p.impact_consistency)
        .map(|v| v.unwrap())
    {
        assert!((v - 1.0).abs() <= 1e-12, "consistency {v}");
    }
    assert_eq!(p.status, mortise::audit::Status::Pass);
    assert!(
        r.report.steps[0].warnings.is_empty(),
        "{:?}",
        r.report.steps[0].warnings
    );
}

#[test]
fn coupled_virtual_points_equal_the_direct_assembly() {
    let s = setup();
    let joints: Vec<Value> = ["X", "Y", "Z", "RX", "RY", "RZ"]
        .iter()
        .map(|d| json!({"a": format!("unit:bolt+{d}"), "b": format!("bracket:bolt+{d}"), "type": "rigid"}))
        .collect();
    let text = recipe(
        vec![
            vp_step(
                "unit_vp",
                "unit",
                json!("unit.geom.csv"),
                json!([point(&s.doc, "unit")]),
            ),
            vp_step(
                "bracket_vp",
                "bracket",
                json!("bracket.geom.csv"),
                json!([point(&s.doc, "bracket")]),
            ),
            json!({"id": "mounted", "op": "couple", "parts": ["unit_vp", "bracket_vp"], "joints": joints}),
        ],
        &["mounted"],
        &[("unit", "unit.csv"), ("bracket", "bracket.csv")],
    );
    let r = run(&text).unwrap();
    let got = &r.outputs[0];
    let want = set_from_json(&s.doc["coupled"], &s.freqs);
    let d = entrywise_rel_diff(got, &want);
    eprintln!(
        "two components coupled at their virtual points against numpy's direct assembly: {d:e}"
    );
    // reference: numpy direct assembly of M, K, C with the block DOFs merged
    assert!(d <= 1e-8, "relative difference {d:e}");
}

#[test]
fn matrices_match_the_published_formulas() {
    let s = setup();
    let set = set_from_json(&s.doc["unit"]["set"], &s.freqs);
    let g = Geometry::from_csv(s.doc["geometry_unit"].as_str().unwrap().as_bytes(), "g").unwrap();
    let w = &s.doc["weighted"];
    let pairs = |v: &Value| -> Vec<(String, f64)> {
        v.as_object()
            .unwrap()
            .iter()
            .map(|(k, x)| (k.clone(), x.as_f64().unwrap()))
            .collect()
    };
    let o = w["origin"].as_array().unwrap();
    let vp = VirtualPointDef {
        name: "bolt".into(),
        origin: [0, 1, 2].map(|i| o[i].as_f64().unwrap()),
        sensors: strings(&s.doc["sensors_unit"]),
        impacts: strings(&s.doc["impacts_unit"]),
        sensor_weights: pairs(&w["sensor_weights"]),
        impact_weights: pairs(&w["impact_weights"]),
    };
    let m = vpt::matrices(&set, &g, &vp).unwrap();
    let cmp = |name: &str, got: &[f64], cols: usize| -> f64 {
        let want = &s.doc[name];
        let rows = want.as_array().unwrap();
        assert_eq!(rows.len() * cols, got.len(), "{name}");
        let mut worst: f64 = 0.0;
        let scale = rows
            .iter()
            .flat_map(|r| r.as_array().unwrap())
            .map(|x| x.as_f64().unwrap().abs())
            .fold(0.0, f64::max);
        for (i, r) in rows.iter().enumerate() {
            for (j, x) in r.as_array().unwrap().iter().enumerate() {
                worst = worst.max((got[i * cols + j] - x.as_f64().unwrap()).abs() / scale);
            }
        }
        worst
    };
    let (du, df) = (cmp("T_u", &m.t_u, 9), cmp("T_f", &m.t_f, 9));
    let (ru, rf) = (cmp("R_u", &m.r_u, 6), cmp("R_f", &m.r_f, 6));
    eprintln!(
        "weighted T_u {du:e}, T_f {df:e}, R_u {ru:e}, R_f {rf:e} (relative to the largest entry)"
    );
    // reference: numpy implementation of the published formulas
    assert!(du <= 1e-12 && df <= 1e-12, "T_u {du:e}, T_f {df:e}");
    assert!(ru <= 1e-14 && rf <= 1e-14, "R_u {ru:e}, R_f {rf:e}");
    // the weights change T (an operand that is accepted changes the result)
    let mut plain = vp.clone();
    plain.sensor_weights.clear();
    plain.impact_weights.clear();
    let m1 = vpt::matrices(&set, &g, &plain).unwrap();
    assert!(m1.t_u.iter().zip(&m.t_u).any(|(a, b)| (a - b).abs() > 1e-6));
    assert!(m1.t_f.iter().zip(&m.t_f).any(|(a, b)| (a - b).abs() > 1e-6));
}

fn strings(v: &Value) -> Vec<String> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_str().unwrap().to_string())
        .collect()
}

#[test]
fn noise_lowers_the_consistency_as_numpy_computes() {
    let s = setup();
    let floats = |k: &str| -> Vec<f64> {
        s.doc[k]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap())
            .collect()
    };
    let (ru, rf) = (floats("rho_u"), floats("rho_f"));
    let lowest = ru.iter().chain(&rf).cloned().fold(1.0, f64::min);
    // a threshold between the lowest value and 1: the flag must fire
    let threshold = 0.5 * (1.0 + lowest);
    let mut step = vp_step(
        "vp",
        "unit",
        json!("unit.geom.csv"),
        json!([point(&s.doc, "unit")]),
    );
    step["consistency_min"] = json!(threshold);
    let r = run(&recipe(vec![step], &["vp"], &[("unit", "noisy.csv")])).unwrap();
    let p = &vp_report(&r, "vp")[0];
    let mut worst: f64 = 0.0;
    for (got, want) in p.sensor_consistency.iter().zip(&ru) {
        worst = worst.max((got.unwrap() - want).abs());
    }
    for (got, want) in p.impact_consistency.iter().zip(&rf) {
        worst = worst.max((got.unwrap() - want).abs());
    }
    eprintln!(
        "1 % noise: lowest consistency {lowest:.9} (numpy), largest difference to numpy {worst:e}"
    );
    // reference: numpy, same definition (tests/py/vpt_block.py `consistency`)
    assert!(worst <= 1e-9, "{worst:e}");
    assert!(
        lowest < 1.0 - 1e-6,
        "noise must lower the consistency: {lowest}"
    );
    assert_eq!(p.status, mortise::audit::Status::Flag);
    let w = &r.report.steps[0].warnings;
    assert!(
        w.iter()
            .any(|w| w.contains("virtual point 'unit:bolt'") && w.contains("consistency falls to")),
        "{w:?}"
    );
    // at the default threshold (0.9, common practice) 1 % noise is not flagged
    let step = vp_step(
        "vp",
        "unit",
        json!("unit.geom.csv"),
        json!([point(&s.doc, "unit")]),
    );
    let r = run(&recipe(vec![step], &["vp"], &[("unit", "noisy.csv")])).unwrap();
    assert_eq!(vp_report(&r, "vp")[0].status, mortise::audit::Status::Pass);
}

#[test]
fn the_cli_runs_the_operation_and_reports_it() {
    let s = setup();
    let text = recipe(
        vec![vp_step(
            "vp",
            "unit",
            json!("unit.geom.csv"),
            json!([point(&s.doc, "unit")]),
        )],
        &["vp"],
        &[("unit", "unit.csv")],
    );
    let path = s.dir.join("vp.recipe.json");
    std::fs::write(&path, text).unwrap();
    let out = s.dir.join("cli_out");
    let printed = mortise::cli::run_cli(&[
        "run".to_string(),
        path.to_str().unwrap().to_string(),
        "-o".to_string(),
        out.to_str().unwrap().to_string(),
    ])
    .unwrap();
    assert!(printed.contains("wrote 1 output(s)"), "{printed}");
    let report: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let p = &report["steps"][0]["virtual_points"][0];
    assert_eq!(p["name"], "unit:bolt");
    assert_eq!(
        p["sensor_consistency"].as_array().unwrap().len(),
        s.freqs.len()
    );
    assert_eq!(p["status"], "pass");
    let help = mortise::cli::run_cli(&["help".to_string(), "recipe".to_string()]).unwrap();
    assert!(help.contains("  to-virtual-points: "), "{help}");
    assert!(help.contains("consistency_min"));
}

/// A recipe over small in-memory files: the unit's set and a geometry text.
fn run_mem(geometry: &str, step: Value) -> mortise::Error {
    let s = setup();
    let set = std::fs::read(s.dir.join("unit.csv")).unwrap();
    let mut files = std::collections::BTreeMap::new();
    files.insert("unit.csv".to_string(), set);
    files.insert("g.csv".to_string(), geometry.as_bytes().to_vec());
    let text = recipe(vec![step], &["vp"], &[("unit", "unit.csv")]);
    match mortise::parse_recipe(&text) {
        Err(e) => e,
        Ok(r) => {
            mortise::run_recipe(&r, &MapSource(files)).expect_err("the recipe must be refused")
        }
    }
}

#[test]
fn bad_inputs_are_refused_with_their_place() {
    let s = setup();
    let geom = s.doc["geometry_unit"].as_str().unwrap().to_string();
    let good = point(&s.doc, "unit");
    let step = |p: Value| vp_step("vp", "unit", json!("g.csv"), json!([p]));

    // collinear sensors: three tri-axial sensors on the line x = y = 0
    let collinear = geom
        .replace("unit:s1, 30, 0, 20", "unit:s1, 0, 0, 20")
        .replace("unit:s2, -15, 26, 20", "unit:s2, 0, 0, 35")
        .replace("-15, -26, 20, ", "0, 0, -10, ");
    let e = run_mem(&collinear, step(good.clone()));
    eprintln!("collinear: {e}");
    assert!(e.to_string().contains("points[0] ('bolt')"), "{e}");
    assert!(e.message.contains("determine 5 of the 6 motions"), "{e}");
    assert!(
        e.message.contains(
            "a rotation about the axis through (0, 0, 0) mm, direction (0.00, 0.00, 1.00)"
        ),
        "{e}"
    );

    // a channel without geometry
    let e = run_mem(
        &geom.replace("unit:s2, -15, 26, 20\n", ""),
        step(good.clone()),
    );
    eprintln!("missing: {e}");
    assert!(
        e.message
            .contains("sensor channel unit:s2+X has no geometry"),
        "{e}"
    );
    assert_eq!(e.field.as_deref(), Some("sensors[1]"), "{e}");

    // a zero-length direction vector
    let e = run_mem(
        &geom.replace("0.3, -1.0, 0.2", "0, 0, 0"),
        step(good.clone()),
    );
    eprintln!("zero vector: {e}");
    assert!(e.message.contains("has no length"), "{e}");
    assert_eq!(e.file.as_deref(), Some("g.csv"));
    assert!(
        matches!(e.location, Some(mortise::error::Location::Line(_))),
        "{e:?}"
    );

    // a missing unit, in a file and inline
    let e = run_mem(&geom.replace("unit, mm\n", ""), step(good.clone()));
    eprintln!("no unit: {e}");
    assert!(e.message.contains("no length unit"), "{e}");
    let inline = json!({"rows": [{"label": "unit:s1", "at": [0, 0, 0]}]});
    let e = run_mem(&geom, vp_step("vp", "unit", inline, json!([good.clone()])));
    assert!(e.message.contains("no length unit"), "{e}");

    // too few channels
    let mut few = good.clone();
    few["sensors"] = json!(["unit:s1"]);
    let e = run_mem(&geom, step(few));
    eprintln!("few: {e}");
    assert!(
        e.message
            .contains("3 sensor channels; a virtual point needs at least 6"),
        "{e}"
    );

    // a channel listed twice
    let mut twice = good.clone();
    twice["sensors"]
        .as_array_mut()
        .unwrap()
        .push(json!("unit:s1+Z"));
    let e = run_mem(&geom, step(twice));
    eprintln!("twice: {e}");
    assert!(e.message.contains("unit:s1+Z is listed twice"), "{e}");
    assert!(e.to_string().contains("points[0] ('bolt')"), "{e}");

    // unknown keys: of the step, of a point, of the inline geometry
    let mut st = step(good.clone());
    st["threshold"] = json!(0.8);
    let e = run_mem(&geom, st);
    assert!(e.message.contains("unknown operand `threshold`"), "{e}");
    let mut p = good.clone();
    p["sensor"] = json!(["unit:s1"]);
    let e = run_mem(&geom, step(p));
    eprintln!("unknown key: {e}");
    assert!(
        e.message
            .contains("points[0] ('bolt'): unknown key `sensor`"),
        "{e}"
    );
    let inline = json!({"unit": "mm", "rows": [], "units": "m"});
    let e = run_mem(&geom, vp_step("vp", "unit", inline, json!([good.clone()])));
    assert!(e.message.contains("geometry: unknown key `units`"), "{e}");

    // a row no point uses is refused, naming its line
    let e = run_mem(&format!("{geom}unit:s9, 1, 2, 3\n"), step(good.clone()));
    eprintln!("unused: {e}");
    assert!(
        e.message.contains("locates no sensor channel or impact"),
        "{e}"
    );
    assert_eq!(e.location, Some(mortise::error::Location::Line(18)), "{e}");

    // a weight that names no channel, a weight that is not positive
    let mut p = good.clone();
    p["sensor_weights"] = json!({"unit:h1+Z": 2.0});
    let e = run_mem(&geom, step(p));
    assert!(e.message.contains("names no channel DOF"), "{e}");
    let mut p = good.clone();
    p["impact_weights"] = json!({"unit:h1+Z": 0.0});
    let e = run_mem(&geom, step(p));
    assert!(
        e.message.contains("expected a positive finite number"),
        "{e}"
    );

    // a threshold outside (0, 1]
    let mut st = step(good.clone());
    st["consistency_min"] = json!(1.5);
    let e = run_mem(&geom, st);
    assert_eq!(e.field.as_deref(), Some("consistency_min"), "{e}");

    // the point's name collides with a DOF kept from the set
    let mut p = good.clone();
    p["name"] = json!("f0");
    let e = run_mem(&geom, step(p));
    assert!(e.message.contains("already an output DOF"), "{e}");
    assert_eq!(e.kind, ErrorKind::Dof, "{e}");
}

#[test]
fn the_result_is_checked_against_the_budget_before_it_is_made() {
    let s = setup();
    let text = recipe(
        vec![vp_step(
            "vp",
            "unit",
            json!("unit.geom.csv"),
            json!([point(&s.doc, "unit")]),
        )],
        &["vp"],
        &[("unit", "unit.csv")],
    );
    let r = mortise::parse_recipe(&text).unwrap();
    // the component (11 × 11 on 38 lines: 4,598 values) fits; with the
    // 8 × 8 result (2,432 more) it does not
    let limits = Limits {
        memory_bytes: 5_000 * 16,
        ..Limits::default()
    };
    let src = DirSource::confined(s.dir.clone(), Limits::default());
    let e = mortise::recipe::run_with(&r, &src, &limits).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
    assert!(e.message.contains("the virtual-point set"), "{e}");
    // and the work budget
    let limits = Limits {
        work: 1e3,
        ..Limits::default()
    };
    let e = mortise::recipe::run_with(&r, &src, &limits).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget, "{e}");
    assert!(e.message.contains("transforming 38 lines"), "{e}");
}

/// The set's sensor and impact nodes numbered as a Universal File must
/// number them (sK → K, hK → 10 + K, as tests/py/vpt_uff_geom.py does).
fn numbered(label: &str) -> String {
    let (comp, rest) = label.split_once(':').unwrap();
    let end = rest.find(['+', '-']).unwrap_or(rest.len());
    let (node, dir) = rest.split_at(end);
    let n = match (node.as_bytes()[0], node[1..].parse::<u32>()) {
        (b's', Ok(k)) => k.to_string(),
        (b'h', Ok(k)) => (10 + k).to_string(),
        _ => node.to_string(),
    };
    format!("{comp}:{n}{dir}")
}

#[test]
fn a_universal_file_with_nodes_and_displacement_systems_is_a_geometry() {
    // The geometry of the rigid block written by pyuff as datasets 2411 and
    // 2420 (each rotated sensor and each oblique impact measured along the
    // axes of its node's own displacement system): the virtual point must
    // come out as with our geometry layout, and so equal numpy's reference.
    let s = setup();
    let mut set = set_from_json(&s.doc["unit"]["set"], &s.freqs);
    for d in set.outputs.iter_mut().chain(set.inputs.iter_mut()) {
        *d = mortise::Dof::parse(&numbered(&d.to_string()), "").unwrap();
    }
    std::fs::write(
        s.dir.join("unitnum.csv"),
        mortise::save(&[set], ExportFormat::Csv).unwrap(),
    )
    .unwrap();
    let said = common::run_py(
        "vpt_uff_geom.py",
        &[
            s.dir.join("unit.geom.csv").to_str().unwrap(),
            s.dir.join("unit.geom.unv").to_str().unwrap(),
        ],
    );
    assert!(said.contains("displacement systems"), "{said}");
    let renumber = |v: &Value| -> Value {
        Value::Array(
            v.as_array()
                .unwrap()
                .iter()
                .map(|x| Value::String(numbered(x.as_str().unwrap())))
                .collect(),
        )
    };
    let mut p = point(&s.doc, "unit");
    p["sensors"] = renumber(&p["sensors"]);
    p["impacts"] = renumber(&p["impacts"]);
    let text = recipe(
        vec![vp_step("vp", "unit", json!("unit.geom.unv"), json!([p]))],
        &["vp"],
        &[("unit", "unitnum.csv")],
    );
    let r = run(&text).unwrap();
    let want = set_from_json(&s.doc["unit"]["reference"], &s.freqs);
    let d = entrywise_rel_diff(&r.outputs[0], &want);
    eprintln!("rigid block, geometry from a Universal File (pyuff 2411 + 2420): {d:e}");
    // reference: numpy full model solve (rigid-body kinematics, textbook)
    assert!(d <= 1e-10, "relative difference {d:e}");
    let step = &r.report.steps[0];
    assert!(
        step.notes
            .iter()
            .any(|n| n.contains("geometry from the nodes")),
        "{:?}",
        step.notes
    );
    // a geometry file without nodes is refused naming the file and the field
    std::fs::write(s.dir.join("empty.unv"), "    -1\n   164\n         1SI                           2\n  1.00000000000000000D+00  1.00000000000000000D+00  1.00000000000000000D+00\n  2.73150000000000000D+02\n    -1\n").unwrap();
    let text = recipe(
        vec![vp_step("vp", "unit", json!("empty.unv"), json!([p]))],
        &["vp"],
        &[("unit", "unitnum.csv")],
    );
    let e = run(&text).unwrap_err().to_string();
    assert!(e.contains("empty.unv") && e.contains("no nodes"), "{e}");
}

/// Position and direction of a channel or impact from the geometry text, by
/// the layout's rules (README): a DOF row wins over its node's row, a DOF
/// row's vector normalised, else the direction of the DOF's own label.
fn placed(geometry: &str, dof: &str) -> ([f64; 3], [f64; 3]) {
    let d = mortise::Dof::parse(dof, "").unwrap();
    let own = {
        let mut v = [0.0; 3];
        let k = match d.dir {
            mortise::Direction::X => 0,
            mortise::Direction::Y => 1,
            _ => 2,
        };
        v[k] = if d.positive { 1.0 } else { -1.0 };
        v
    };
    let node = format!("{}:{}", d.component, d.node);
    let mut found: Option<([f64; 3], [f64; 3])> = None;
    for line in geometry.lines().filter(|l| !l.starts_with('#')) {
        let cells: Vec<&str> = line.split(',').map(str::trim).collect();
        if cells.len() < 4 {
            continue;
        }
        let n = |i: usize| cells[i].parse::<f64>().unwrap();
        let at = [n(1), n(2), n(3)];
        let same_dof = mortise::Dof::parse(cells[0], "")
            .map(|g| g.component == d.component && g.node == d.node && g.dir == d.dir)
            .unwrap_or(false);
        if same_dof {
            let dir = if cells.len() == 7 {
                let v = [n(4), n(5), n(6)];
                let l = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
                [v[0] / l, v[1] / l, v[2] / l]
            } else {
                own
            };
            return (at, dir);
        }
        if cells[0] == node {
            found = Some((at, own));
        }
    }
    found.unwrap_or_else(|| panic!("{dof} has no row"))
}

#[test]
fn the_geometry_of_the_step_is_drawn_where_it_is() {
    // `mortise diagram RECIPE --step ID`, read back by Python's xml.etree
    // (tests/py/svg_chart.py): one arrow per channel and per impact in each
    // of the three views, each at its position and along its direction as
    // the geometry file gives them, the origin's marker at its place; the
    // pixels per millimetre taken from the drawing's scale bar. Views:
    // top X–Y, front X–Z, side Y–Z, right-handed (textbook orthographic
    // projection). Contrast of every text ≥ 4.5:1 (WCAG 2.1 SC 1.4.3).
    let s = setup();
    let geometry = s.doc["geometry_unit"].as_str().unwrap();
    let mut steps = vec![vp_step(
        "foot",
        "unit",
        json!("unit.geom.csv"),
        json!([point(&s.doc, "unit")]),
    )];
    steps.push(json!({"id": "twice", "op": "scale", "from": "foot", "factor": 2}));
    let text = recipe(steps, &["twice"], &[("unit", "unit.csv")]);
    let path = s.dir.join("geometry.recipe.json");
    std::fs::write(&path, &text).unwrap();
    let out = s.dir.join("foot.svg");
    let cli = |args: &[&str]| {
        let mut v = vec!["diagram".to_string(), path.to_str().unwrap().to_string()];
        v.extend(args.iter().map(|a| a.to_string()));
        mortise::cli::run_cli(&v)
    };
    let printed = cli(&["--step", "foot", "-o", out.to_str().unwrap()]).unwrap();
    assert!(
        printed.contains("step 'foot', 1 virtual point(s), 9 sensor channel(s), 9 impact(s)"),
        "{printed}"
    );
    let py: Value =
        serde_json::from_str(&common::run_py("svg_chart.py", &[out.to_str().unwrap()])).unwrap();
    let items = py["items"].as_array().unwrap();

    // the scale bar: pixels per millimetre
    let bar = items.iter().find(|i| i["data-kind"] == "scale").unwrap();
    let bar_px = bar["line"]["x2"].as_f64().unwrap() - bar["line"]["x1"].as_f64().unwrap();
    let bar_text = bar["texts"][0].as_str().unwrap();
    let bar_mm: f64 = bar_text.strip_suffix(" mm").unwrap().parse().unwrap();
    let per_mm = bar_px / bar_mm;

    // what the transformation resolved: the report's channels and impacts
    let run = run(&text).unwrap();
    let rep = &vp_report(&run, "foot")[0];
    assert_eq!((rep.sensors.len(), rep.impacts.len()), (9, 9));

    let views = [("top", 0usize, 1usize), ("front", 0, 2), ("side", 1, 2)];
    let mut worst_pos: f64 = 0.0;
    let mut worst_dir: f64 = 0.0;
    for (view, h, v) in views {
        let in_view: Vec<&Value> = items.iter().filter(|i| i["data-view"] == view).collect();
        let origin = in_view.iter().find(|i| i["data-kind"] == "origin").unwrap();
        assert_eq!(origin["data-name"], "unit:bolt");
        assert!(origin["texts"]
            .as_array()
            .unwrap()
            .iter()
            .any(|t| t == "unit:bolt"));
        let o_px = (
            origin["circle"]["cx"].as_f64().unwrap(),
            origin["circle"]["cy"].as_f64().unwrap(),
        );
        let o_mm = [0.0, 0.0, 0.0]; // the point's origin in the recipe
        for (kind, dofs) in [("sensor", &rep.sensors), ("impact", &rep.impacts)] {
            let drawn: Vec<&&Value> = in_view.iter().filter(|i| i["data-kind"] == kind).collect();
            assert_eq!(drawn.len(), dofs.len(), "{view} {kind}");
            for dof in dofs {
                let mine: Vec<&&&Value> = drawn
                    .iter()
                    .filter(|i| i["data-name"] == dof.as_str())
                    .collect();
                assert_eq!(mine.len(), 1, "{view}: {dof} drawn once");
                let it = mine[0];
                let (at, dir) = placed(geometry, dof);
                // screen: right = +h, down = −v
                let want = (
                    o_px.0 + per_mm * (at[h] - o_mm[h]),
                    o_px.1 - per_mm * (at[v] - o_mm[v]),
                );
                let (sx, sy) = (dir[h], -dir[v]);
                let anchor = if it["line"].is_object() {
                    let l = &it["line"];
                    let (x1, y1, x2, y2) = (
                        l["x1"].as_f64().unwrap(),
                        l["y1"].as_f64().unwrap(),
                        l["x2"].as_f64().unwrap(),
                        l["y2"].as_f64().unwrap(),
                    );
                    // along the projected direction, tail to head
                    let (dx, dy) = (x2 - x1, y2 - y1);
                    let n = dx.hypot(dy) * sx.hypot(sy);
                    worst_dir = worst_dir.max(((dx * sy - dy * sx) / n).abs());
                    assert!(
                        dx * sx + dy * sy > 0.0,
                        "{view}: {dof} points the wrong way"
                    );
                    assert_eq!(l["dashed"].as_bool(), Some(kind == "impact"), "{dof}");
                    // a sensor's arrow leaves its position, an impact's ends there
                    if kind == "sensor" {
                        (x1, y1)
                    } else {
                        (x2, y2)
                    }
                } else {
                    // along the line of sight of this view
                    assert!(sx.hypot(sy) < 0.3, "{view}: {dof} drawn end-on");
                    let c = &it["circle"];
                    assert_eq!(c["dashed"].as_bool(), Some(kind == "impact"), "{dof}");
                    (c["cx"].as_f64().unwrap(), c["cy"].as_f64().unwrap())
                };
                worst_pos = worst_pos.max((anchor.0 - want.0).hypot(anchor.1 - want.1));
            }
        }
    }
    eprintln!(
        "# measure vpt geometry: {per_mm:.4} px/mm from the scale bar ({bar_text}); largest position error {worst_pos:.3} px, largest direction error (sine) {worst_dir:.4}"
    );
    assert!(worst_pos <= 0.5, "{worst_pos}");
    assert!(worst_dir <= 0.02, "{worst_dir}");
    let lowest = py["texts"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t["contrast"].as_f64().unwrap())
        .fold(f64::INFINITY, f64::min);
    assert!(lowest >= 4.5, "lowest text contrast {lowest:.2}");
    assert!(py["desc"]
        .as_str()
        .unwrap()
        .contains("unit:bolt at (0, 0, 0) mm: 9 sensor channel(s) at 3 position(s), 9 impact(s) at 9 position(s)"));

    // the page's path (files from the workspace, the geometry inline) draws
    // the same
    let mut ws = mortise::Workspace::new();
    ws.load_file(
        "unit.csv",
        &std::fs::read(s.dir.join("unit.csv")).unwrap(),
        json!({}),
    )
    .unwrap();
    let mut rows = Vec::new();
    for line in geometry.lines().filter(|l| !l.starts_with('#')) {
        let c: Vec<&str> = line.split(',').map(str::trim).collect();
        if c.len() < 4 {
            continue;
        }
        let n = |i: usize| c[i].parse::<f64>().unwrap();
        let mut row = json!({"label": c[0], "at": [n(1), n(2), n(3)]});
        if c.len() == 7 {
            row["dir"] = json!([n(4), n(5), n(6)]);
        }
        rows.push(row);
    }
    let inline = recipe(
        vec![vp_step(
            "foot",
            "unit",
            json!({"unit": "mm", "rows": rows}),
            json!([point(&s.doc, "unit")]),
        )],
        &["foot"],
        &[("unit", "unit.csv")],
    );
    let r = mortise::parse_recipe(&inline).unwrap();
    let (g, plan) = ws.virtual_point_plan(&r, "foot").unwrap();
    let page = mortise::plot::vpt_geometry_svg("foot", &g, &plan.points).unwrap();
    assert_eq!(
        std::fs::read_to_string(&out).unwrap(),
        format!("{}\n", page.svg)
    );

    // refusals name the step
    let e = cli(&["--step", "nope"]).unwrap_err();
    assert!(
        e.message.contains("no step 'nope'") && e.message.contains("the recipe's are foot"),
        "{e}"
    );
    assert_eq!(mortise::cli::exit_code(e.kind), 1);
    let e = cli(&["--step", "twice"]).unwrap_err();
    assert!(e.message.contains("step 'twice' is a 'scale' step"), "{e}");
    let e = cli(&["--read-outside"]).unwrap_err();
    assert_eq!(mortise::cli::exit_code(e.kind), 2, "{e}");
    assert!(e.message.contains("applies with --step only"), "{e}");
    let help = mortise::cli::run_cli(&["help".to_string(), "diagram".to_string()]).unwrap();
    assert!(help.contains("--step ID"), "{help}");
}
