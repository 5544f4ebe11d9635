//! A supplier's time CSV (title line, names and units rows, semicolons,
//! decimal commas, time in ms, a column left out) read through a time
//! column map, on the page's workspace and by `mortise spectrum
//! --time-map`, against numpy's reading of the same file and
//! scipy.signal.welch (tests/py/supplier_time_csv.py).

mod common;

use mortise::workspace::Workspace;
use serde_json::json;

fn arr(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

#[test]
fn a_supplier_time_csv_reads_through_its_map_as_numpy_reads_it() {
    let dir = common::scratch("csv_time_mapped");
    let csv = dir.join("bench-run4.csv");
    let r: serde_json::Value = serde_json::from_str(&common::run_py(
        "supplier_time_csv.py",
        &[csv.to_str().unwrap()],
    ))
    .unwrap();
    let bytes = std::fs::read(&csv).unwrap();
    let map = json!({"delimiter": "semicolon", "skip_rows": 3, "header_line": 2, "unit_line": 3,
        "decimal_comma": true, "time": "Zeit",
        "channels": [{"column": "Hammer", "dof": "rig:1+Z"},
                     {"column": "Beschl. 1", "dof": "rig:2+Z"}]});
    // without its map the file is refused, pointing to the map
    let mut ws = Workspace::new();
    assert!(ws.load_file("bench-run4.csv", &bytes, json!({})).is_err());
    let sum = ws
        .load_file("bench-run4.csv", &bytes, json!({ "time_map": map }))
        .unwrap();
    let rec_sum = sum.recording.as_ref().expect("a recording");
    assert!(
        rec_sum.notes.iter().any(|n| n.contains("'Temp'")),
        "{:?}",
        rec_sum.notes
    );
    let rec = ws.recording("bench-run4.csv").unwrap();
    // numpy's reading: time steps of 0.5 ms, force in N, acceleration in g
    // (g = 9.80665 m/s², the standard acceleration of gravity, CGPM 1901)
    let t = arr(&r["t_ms"]);
    assert!((rec.fs - 1000.0 / (t[1] - t[0])).abs() < 1e-9, "{}", rec.fs);
    assert_eq!(rec.samples[0], arr(&r["force"]));
    let acc: Vec<f64> = arr(&r["acc_g"]).iter().map(|a| a * 9.80665).collect();
    let worst = rec.samples[1].iter().zip(&acc).fold(0.0f64, |m, (a, b)| {
        m.max((a - b).abs() / b.abs().max(1e-300))
    });
    assert!(worst < 1e-15, "{worst:e}");
    // the command line with the map in a file: the PSD scipy gives on numpy's reading
    let map_file = dir.join("bench.time-map.json");
    std::fs::write(&map_file, map.to_string()).unwrap();
    let out = dir.join("psd.csv");
    let argv: Vec<String> = [
        "spectrum",
        csv.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "--time-map",
        map_file.to_str().unwrap(),
        "--kind",
        "psd",
        "--segment",
        "256",
        "--overlap",
        "0.5",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    let text = mortise::cli::run_cli(&argv).unwrap();
    assert!(text.contains("'Temp'"), "{text}");
    let sets = mortise::io::load(
        &std::fs::read(&out).unwrap(),
        "psd.csv",
        &mortise::io::ImportOptions::default(),
    )
    .unwrap()
    .sets;
    let acc_set = sets
        .iter()
        .find(|s| s.out_qty == mortise::units::Quantity::Acceleration)
        .unwrap();
    let want = arr(&r["psd_acc"]);
    let top = want.iter().fold(0.0f64, |m, v| m.max(*v));
    let mut e = 0.0f64;
    for (k, w) in want.iter().enumerate() {
        e = e.max((acc_set.get(k, 0, 0).re - w).abs() / top);
    }
    println!("# measure supplier time CSV: samples as numpy reads them (worst {worst:.1e}), PSD against scipy.signal.welch {e:.1e} of its largest line");
    assert!(e < 1e-10, "{e:e}");
    // a recipe's spectrum step with the same map
    let recipe = json!({"format": "mortise-recipe", "version": 1, "components": {},
        "steps": [{"id": "bench", "op": "spectrum", "file": "bench-run4.csv", "kind": "psd",
            "segment": 256, "overlap": 0.5, "detrend": "constant", "time_map": map}],
        "outputs": ["bench"]});
    std::fs::write(dir.join("bench.recipe.json"), recipe.to_string()).unwrap();
    let run_out = dir.join("run");
    let run = |file: &str| {
        mortise::cli::run_cli(&[
            "run".into(),
            dir.join(file).to_str().unwrap().into(),
            "-o".into(),
            run_out.to_str().unwrap().into(),
        ])
    };
    run("bench.recipe.json").unwrap();
    let acc_run = mortise::io::load(
        &std::fs::read(run_out.join("bench_acceleration.csv")).unwrap(),
        "a.csv",
        &mortise::io::ImportOptions::default(),
    )
    .unwrap()
    .sets;
    let mut e_run = 0.0f64;
    for (k, w) in want.iter().enumerate() {
        e_run = e_run.max((acc_run[0].get(k, 0, 0).re - w).abs() / top);
    }
    assert!(e_run < 1e-10, "recipe: {e_run:e}");
    let mut bad = recipe.clone();
    bad["steps"][0]["time_map"]["rate"] = json!(2000);
    std::fs::write(dir.join("bad.recipe.json"), bad.to_string()).unwrap();
    let e = run("bad.recipe.json").unwrap_err();
    assert!(e.to_string().contains("rate"), "{e}");
    // a map naming a column the file lacks: refused, listing the names
    std::fs::write(
        &map_file,
        json!({"delimiter": "semicolon", "skip_rows": 3, "header_line": 2, "unit_line": 3,
            "decimal_comma": true, "time": "Zeit",
            "channels": [{"column": "Beschl. 2", "dof": "rig:3+Z"}]})
        .to_string(),
    )
    .unwrap();
    let e = mortise::cli::run_cli(&argv).unwrap_err();
    assert!(
        e.message.contains("no column named 'Beschl. 2'") && e.message.contains("'Zeit'"),
        "{e}"
    );
}
