//! A recipe whose components carry an uncertainty, through `mortise run`:
//! the demo scenario with supplier-like noise stated per component.

mod common;

use serde_json::{json, Value};
use std::path::{Path, PathBuf};

fn cli(args: &[&str]) -> Result<String, mortise::Error> {
    let v: Vec<String> = args.iter().map(|s| s.to_string()).collect();
    mortise::cli::run_cli(&v)
}

/// The demo's files and its recipe with `edit` applied, written to `dir`.
fn demo_recipe(dir: &Path, edit: impl FnOnce(&mut Value)) -> PathBuf {
    let input = dir.join("in");
    cli(&["demo", "-o", input.to_str().unwrap()]).unwrap();
    let p = input.join("heat-pump.recipe.json");
    let mut r: Value = serde_json::from_str(&std::fs::read_to_string(&p).unwrap()).unwrap();
    edit(&mut r);
    let q = input.join("unc.recipe.json");
    std::fs::write(&q, serde_json::to_string_pretty(&r).unwrap()).unwrap();
    q
}

#[test]
fn demo_with_stated_uncertainty_reports_interval_reliability_and_files() {
    let dir = common::scratch("run_uncertainty");
    let recipe = demo_recipe(&dir, |r| {
        for c in ["casing", "bracket", "wall", "room"] {
            r["components"][c]["uncertainty"] = json!({"relative": 0.01, "floor_db": -60});
        }
        r["components"]["forces"]["uncertainty"] = json!({"relative": 0.05});
        // the variant would run the propagation again; one run is enough here
        r.as_object_mut().unwrap().remove("variants");
    });
    let out = dir.join("out");
    let printed = cli(&["run", recipe.to_str().unwrap(), "-o", out.to_str().unwrap()]).unwrap();
    // the headline: the level, then its 95 % interval and where it comes from
    let line = printed
        .lines()
        .find(|l| l.starts_with("bedroom at room:bed:"))
        .unwrap_or_else(|| panic!("{printed}"));
    assert!(line.contains("95 % interval"), "{line}");
    assert!(line.contains("from the stated input uncertainty"), "{line}");
    let report: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let steps = report["steps"].as_array().unwrap();
    let step = |id: &str| steps.iter().find(|s| s["id"] == id).unwrap();
    let row = &step("bedroom")["levels"][0];
    let level = row["overall_db"].as_f64().unwrap();
    let iv = row["overall_interval_95_db"].as_array().unwrap();
    let (lo, hi) = (iv[0].as_f64().unwrap(), iv[1].as_f64().unwrap());
    eprintln!("headline: {line}");
    assert!(lo < level && level < hi, "{lo} {level} {hi}");
    // 1 % on the structure and 5 % on the forces cannot move the level by 6 dB
    assert!(hi - lo > 0.05 && hi - lo < 6.0, "{lo} {hi}");
    // each anchor path's level has its interval, each but the last the
    // chance that the next one is as loud (its numbers: the numpy test below)
    let ranked = step("bedroom")["ranking"]["targets"][0]["overall"]
        .as_array()
        .unwrap();
    assert_eq!(ranked.len(), 4);
    for (i, p) in ranked.iter().enumerate() {
        let l = p["level_db"].as_f64().unwrap();
        let iv = p["interval_95_db"].as_array().unwrap();
        assert!(
            iv[0].as_f64().unwrap() <= l && l <= iv[1].as_f64().unwrap(),
            "{p}"
        );
        let c = p.get("swap_chance_with_next").and_then(Value::as_f64);
        assert_eq!(c.is_some(), i < 3, "{p}");
        assert!(c.map_or(true, |c| (0.0..=0.5).contains(&c)), "{p}");
    }
    assert!(
        printed.contains("chance that neighbouring paths swap ranks"),
        "{printed}"
    );
    // the coupling: its reliability with statements in words
    let u = &step("mounted")["uncertainty"];
    let frac = u["fraction_flagged"].as_f64().unwrap();
    eprintln!(
        "mounted: {:.1} % flagged; {}",
        100.0 * frac,
        u["statements"][0].as_str().unwrap_or("")
    );
    assert!(frac > 0.0 && frac < 1.0, "{frac}");
    assert!(u["method"].as_str().unwrap().contains("first-order"), "{u}");
    assert!(!u["statements"].as_array().unwrap().is_empty());
    // every step on the way carries one, the component notes say how
    for id in [
        "seat_to_anchor",
        "anchor_velocity",
        "wall_impedance",
        "anchor_forces",
    ] {
        assert!(step(id)["uncertainty"].is_object(), "step {id}");
    }
    let notes: Vec<&str> = report["notes"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|n| n.as_str())
        .collect();
    assert!(
        notes
            .iter()
            .any(|n| n.contains("component 'forces': uncertainty relative 5 %")),
        "{notes:?}"
    );
    // the uncertainty file beside each output: header, one row per line
    let csv = std::fs::read_to_string(out.join("bedroom.uncertainty.csv")).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[0], "# mortise-uncertainty 1");
    let header = lines.iter().find(|l| l.starts_with("freq_Hz")).unwrap();
    assert_eq!(*header, "freq_Hz,u room:bed/ref,flag room:bed/ref");
    let rows = lines.iter().filter(|l| !l.starts_with(['#', 'f'])).count();
    let data = std::fs::read_to_string(out.join("bedroom.csv")).unwrap();
    let data_rows = data
        .lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("freq"))
        .count();
    assert_eq!(rows, data_rows);
    assert!(out.join("seat_to_anchor.uncertainty.csv").exists());
    // each anchor path's contribution has its own (first order through its
    // FRF column and excitation row: the numpy check of the swap chances)
    let path_files = std::fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| {
            n.starts_with("bedroom") && n.contains("wall") && n.ends_with(".uncertainty.csv")
        })
        .count();
    assert_eq!(path_files, 4);
}

#[test]
fn uncertainty_keys_are_used_or_refused_by_name() {
    let dir = common::scratch("run_uncertainty_bad");
    for (spec, expect) in [
        (json!({"relativ": 0.01}), "relativ"),
        (json!({"relative": -0.01}), "relative"),
        (json!({"floor_db": 6}), "floor_db"),
        (json!({"averages": 20}), "coherence"),
        (json!({}), "empty"),
    ] {
        let recipe = demo_recipe(&dir, |r| {
            r["components"]["casing"]["uncertainty"] = spec.clone();
        });
        let e = cli(&[
            "run",
            recipe.to_str().unwrap(),
            "-o",
            dir.join("out").to_str().unwrap(),
        ])
        .unwrap_err();
        let text = e.to_string();
        assert!(text.contains("casing"), "{spec}: {text}");
        assert!(text.contains(expect), "{spec}: {text}");
        assert_eq!(mortise::cli::exit_code(e.kind), 1, "{spec}: {text}");
    }
}

#[test]
fn monte_carlo_of_the_recipe_and_its_bad_options() {
    let dir = common::scratch("run_uncertainty_mc");
    let recipe = demo_recipe(&dir, |r| {
        r["components"]["forces"]["uncertainty"] = json!({"relative": 0.05});
        r.as_object_mut().unwrap().remove("variants");
    });
    let rp = recipe.to_str().unwrap();
    let out = dir.join("out");
    let op = out.to_str().unwrap();
    for (args, expect) in [
        (vec!["--monte-carlo", "1"], "2 or more"),
        (vec!["--monte-carlo", "x"], "whole number"),
        (vec!["--seed", "3"], "--monte-carlo N"),
        (vec!["--monte-carlo", "3", "--seed", "-1"], "--seed"),
    ] {
        let mut a = vec!["run", rp, "-o", op];
        a.extend(args.iter());
        let e = cli(&a).unwrap_err();
        assert_eq!(mortise::cli::exit_code(e.kind), 2, "{args:?}: {e}");
        assert!(e.to_string().contains(expect), "{args:?}: {e}");
    }
    let printed = cli(&["run", rp, "-o", op, "--monte-carlo", "3", "--seed", "7"]).unwrap();
    let line = printed
        .lines()
        .find(|l| l.starts_with("Monte Carlo of the recipe (3 draws, seed 7): bedroom at room:bed"))
        .unwrap_or_else(|| panic!("{printed}"));
    assert!(line.contains("dB(A)"), "{line}");
    let report: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let mc = &report["monte_carlo"];
    assert_eq!(mc["draws"], 3);
    assert!(mc["method"].as_str().unwrap().contains("'forces'"), "{mc}");
    // 5 % on the forces alone: every draw moves the level, and only a little
    let bed = mc["levels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["step"] == "bedroom")
        .unwrap();
    let sd = bed["std_db"].as_f64().unwrap();
    assert!(sd > 0.0 && sd < 1.0, "{bed}");
}

/// The page's path, natively: the demo's files in a workspace, the run's
/// result with its uncertainty kept beside it, and the plot of it carrying
/// the 95 % band, the pale unreliable lines and the read-out's interval.
/// A workspace with the demo's files loaded (each with the import options
/// its component names, as the page does), and the demo's recipe.
fn demo_workspace() -> (mortise::workspace::Workspace, String) {
    let mut ws = mortise::workspace::Workspace::new();
    let files = mortise::demo_files::files().unwrap();
    let recipe = files
        .iter()
        .find(|(n, _)| n.ends_with(".recipe.json"))
        .map(|(_, b)| String::from_utf8(b.clone()).unwrap())
        .unwrap();
    let r: Value = serde_json::from_str(&recipe).unwrap();
    for (name, bytes) in &files {
        if name.ends_with(".recipe.json") {
            continue;
        }
        let opts = r["components"]
            .as_object()
            .unwrap()
            .values()
            .find(|c| c["file"] == name.as_str())
            .and_then(|c| c.get("import").cloned())
            .unwrap_or(json!({}));
        ws.load_file(name, bytes, opts).unwrap();
    }
    (ws, recipe)
}

#[test]
fn a_bundle_carries_each_results_uncertainty_but_not_one_a_withheld_input_is_behind() {
    use mortise::workspace::{BundleOptions, Workspace};
    let (mut ws, recipe) = demo_workspace();
    let run = ws.run_recipe(&recipe).unwrap();
    let bed = run
        .results
        .iter()
        .find(|r| r.name == "bedroom")
        .unwrap()
        .id
        .clone();
    let opts = BundleOptions {
        created: "2026-12-03T00:00:00Z".into(),
        ..BundleOptions::default()
    };
    let made = ws.make_bundle(&recipe, &opts).unwrap();
    let v: Value = serde_json::from_slice(&made.bytes).unwrap();
    assert_eq!(v["version"], 4);
    let results = v["results"].as_array().unwrap();
    let k = results.iter().position(|r| r["name"] == "bedroom").unwrap();
    let u = &results[k]["uncertainty"];
    assert_eq!(
        u["std"].as_array().unwrap().len(),
        results[k]["data"].as_array().unwrap().len()
    );
    // its SHA-256 against an independent Python version of the documented
    // layout (tests/py/bundle_hashes.py; SHA-256 itself is FIPS 180-4)
    let path = common::scratch("bundle_uncertainty").join("shared.json");
    std::fs::write(&path, &made.bytes).unwrap();
    let out = common::run_py("bundle_hashes.py", &[path.to_str().unwrap()]);
    let checked: Vec<&str> = out
        .lines()
        .filter(|l| l.starts_with("uncertainty "))
        .collect();
    assert!(!checked.is_empty(), "{out}");
    for l in &checked {
        let f: Vec<&str> = l.split(' ').collect();
        assert_eq!(f[2], f[3], "{l}");
    }
    // opened elsewhere: the same uncertainty and flags, bit for bit, beside
    // the result, so the recipient's page draws the same band
    let mut back = Workspace::new();
    let opened = back.open_bundle("shared.json", &made.bytes).unwrap();
    let id = opened
        .results
        .iter()
        .find(|r| r.name == "bedroom")
        .unwrap()
        .id
        .clone();
    let (a, b) = (&ws.uncertainties()[&bed], &back.uncertainties()[&id]);
    let bits = |x: &[f64]| x.iter().map(|v| v.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&a.uncertainty.std), bits(&b.uncertainty.std));
    assert_eq!(a.reliability.flags, b.reliability.flags);
    assert_eq!(a.reliability.bands, b.reliability.bands);
    assert_eq!(a.uncertainty.method, b.uncertainty.method);
    // an altered value is refused, naming the result and the uncertainty
    let mut t = v.clone();
    let (j, x) = u["std"]
        .as_array()
        .unwrap()
        .iter()
        .enumerate()
        .filter_map(|(j, x)| Some((j, x.as_f64()?)))
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .unwrap();
    assert!(x > 0.0);
    t["results"][k]["uncertainty"]["std"][j] = json!(x * 1.01);
    let e = Workspace::new()
        .open_bundle("shared.json", &serde_json::to_vec_pretty(&t).unwrap())
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("result") && e.contains("'bedroom'") && e.contains("uncertainty, sha256"),
        "{e}"
    );
    // a flag outside the reason bits, and a list of the wrong length
    let mut t = v.clone();
    t["results"][k]["uncertainty"]["flags"][0] = json!(64);
    let e = Workspace::new()
        .open_bundle("shared.json", &serde_json::to_vec_pretty(&t).unwrap())
        .unwrap_err()
        .to_string();
    assert!(e.contains("uncertainty, flags, value 1"), "{e}");
    let mut t = v.clone();
    t["results"][k]["uncertainty"]["std"]
        .as_array_mut()
        .unwrap()
        .pop();
    let e = Workspace::new()
        .open_bundle("shared.json", &serde_json::to_vec_pretty(&t).unwrap())
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("uncertainty, std") && e.contains("the set holds"),
        "{e}"
    );

    // the wall's maker withholds its FRFs: the bedroom's level still travels
    // (its DOFs are the room's), its per-value spread does not (every step
    // to it reads the wall)
    let mut opts = opts.clone();
    opts.include_raw
        .insert("wall-accelerance.csv".into(), false);
    let made = ws.make_bundle(&recipe, &opts).unwrap();
    let v: Value = serde_json::from_slice(&made.bytes).unwrap();
    let r = v["results"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["name"] == "bedroom")
        .expect("the bedroom's result travels");
    assert!(r.get("uncertainty").is_none(), "{}", r["uncertainty"]);
    assert!(
        made.notice.contains("per-value uncertainty of 'bedroom'"),
        "{}",
        made.notice
    );
}

#[test]
fn workspace_keeps_uncertainty_and_the_plot_draws_its_band() {
    use mortise::plot::{probe_data, render_data_svg, PlotData, PlotSpec, View};
    let (mut ws, recipe) = demo_workspace();
    let run = ws.run_recipe(&recipe).unwrap();
    let id = |name: &str| {
        run.results
            .iter()
            .find(|r| r.name == name)
            .unwrap_or_else(|| panic!("no result {name}"))
            .id
            .clone()
    };
    let bed = id("bedroom");
    let a = ws
        .uncertainties()
        .get(&bed)
        .expect("the bedroom's uncertainty");
    let set = ws.set(&bed).unwrap();
    assert_eq!(a.uncertainty.std.len(), set.data.len());
    // an FRF (a band) and the bedroom's line spectrum (a bar at each line)
    let frf = id("seat_to_anchor");
    assert!(ws.uncertainties().contains_key(&frf));
    let spec = PlotSpec::from_json(
        &json!({"kind": "magnitude", "series": [
            {"set": frf, "out": 0, "in": 0},
            {"set": bed, "out": 0, "in": 0}
        ]})
        .to_string(),
    )
    .unwrap();
    let data = PlotData::resolve_with_bands(&spec, ws.sets(), ws.uncertainties()).unwrap();
    let (svg, drawn) = render_data_svg(&data, &View::of(&spec), 900, 500).unwrap();
    assert!(
        drawn
            .legend
            .iter()
            .any(|l| l.label.contains("shaded: 95 % band")),
        "{:?}",
        drawn.legend
    );
    assert!(svg.contains("<polygon"), "no band drawn");
    assert!(
        svg.contains("opacity=\"0.18\""),
        "the band's fill is not light"
    );
    let bars = svg
        .matches("<rect")
        .zip(svg.split("<rect").skip(1))
        .filter(|(_, r)| r.contains("opacity=\"0.18\""))
        .count();
    assert!(bars >= 15, "{bars} interval bars on the line spectrum");
    // the same drawing after crossing to the drawing instance in parts
    let again = PlotData::from_parts(data.to_parts()).unwrap();
    assert_eq!(
        render_data_svg(&again, &View::of(&spec), 900, 500)
            .unwrap()
            .0,
        svg
    );
    // the read-out at the strongest line: its level inside its interval,
    // the interval the formula of reliability::level_interval_db gives
    let k = set
        .freqs
        .iter()
        .position(|f| (*f - 116.0).abs() < 0.6)
        .expect("a line at 116 Hz");
    let probes = probe_data(&data, set.freqs[k]);
    let p = probes
        .iter()
        .find(|p| p.label.starts_with("bedroom"))
        .expect("the bedroom's read-out");
    let [lo, hi] = p.interval_95_db.expect("an interval");
    let (lo, hi) = (lo.unwrap(), hi.unwrap());
    assert!(
        lo < p.level_db && p.level_db < hi,
        "{lo} {} {hi}",
        p.level_db
    );
    let (elo, ehi) = mortise::uncertainty::level_interval_db(
        set.data[k],
        a.uncertainty.std[k],
        set.signal,
        p.level_db,
    );
    assert_eq!((lo, hi), (elo, ehi));
    assert_eq!(p.reliable, Some(a.reliability.flags[k] == 0));
    // a plot without uncertainty draws no band, and the baseline run
    // forgets them with its sets
    let plain = PlotData::resolve(&spec, ws.sets()).unwrap();
    let (svg_plain, _) = render_data_svg(&plain, &View::of(&spec), 900, 500).unwrap();
    assert!(!svg_plain.contains("opacity=\"0.18\""));
    ws.clear();
    assert!(ws.uncertainties().is_empty());
}

#[test]
fn path_swap_chances_agree_with_a_numpy_monte_carlo() {
    // three paths into one target, four lines, 10 % circular noise on every
    // FRF value and force; mortise (first order to each path's lines, then
    // 1,000 draws to the levels) against numpy drawing the FRFs and forces
    // themselves (200,000 draws, no linearisation): tests/py/path_swap.py
    use mortise::frf::SignalKind;
    use mortise::uncertainty::{chain, level, FrfUncertainty};
    use num_complex::Complex64;
    let freqs = vec![100.0, 200.0, 300.0, 400.0];
    let ins: Vec<mortise::Dof> = (1..=3)
        .map(|i| mortise::Dof::parse(&format!("unit:{i}+Z"), "").unwrap())
        .collect();
    let target = vec![mortise::Dof::parse("room:bed", "").unwrap()];
    let mut h = mortise::FrfSet::zeros(
        "h",
        freqs.clone(),
        target.clone(),
        ins.clone(),
        mortise::Quantity::Pressure,
        mortise::Quantity::Force,
    );
    let mut f = mortise::predict::new_spectrum(
        "f",
        freqs.clone(),
        ins.clone(),
        mortise::Quantity::Force,
        SignalKind::Peak,
    );
    let scale = [1.0, 0.95, 0.85];
    let (mut hj, mut fj, mut uhj, mut ufj) = (vec![], vec![], vec![], vec![]);
    for k in 0..4 {
        let (mut hr, mut fr, mut uhr, mut ufr) = (vec![], vec![], vec![], vec![]);
        for (p, s) in scale.iter().enumerate() {
            let hv = Complex64::from_polar(s * 1e-3 * (1.0 + 0.3 * k as f64), (k + p) as f64);
            let fv = Complex64::from_polar(1.0 + 0.1 * p as f64, 0.5 * p as f64);
            h.set(k, 0, p, hv);
            f.set(k, p, 0, fv);
            hr.push([hv.re, hv.im]);
            fr.push([fv.re, fv.im]);
            uhr.push(0.1 * hv.norm());
            ufr.push(0.1 * fv.norm());
        }
        hj.push(hr);
        fj.push(fr);
        uhj.push(uhr);
        ufj.push(ufr);
    }
    let uh = FrfUncertainty {
        std: uhj.iter().flatten().copied().collect(),
        method: "10 %".into(),
    };
    let uf = FrfUncertainty {
        std: ufj.iter().flatten().copied().collect(),
        method: "10 %".into(),
    };
    let c = mortise::predict::paths::path_contributions(&h, &f, &[]).unwrap();
    let sets: Vec<mortise::FrfSet> = (0..3)
        .map(|p| {
            let mut s = c.total.clone();
            for k in 0..4 {
                s.set(k, 0, 0, c.get(k, 0, p));
            }
            s
        })
        .collect();
    let rows: Vec<Vec<usize>> = (0..3).map(|p| vec![p]).collect();
    let us = chain::paths_first_order(&h, Some(&uh), &f, Some(&uf), &rows).unwrap();
    let paths: Vec<(&mortise::FrfSet, Option<&FrfUncertainty>)> =
        sets.iter().zip(&us).map(|(s, u)| (s, Some(u))).collect();
    let ours = level::path_spread(&paths, 0, mortise::levels::Weighting::Z).unwrap();

    let dir = common::scratch("path_swap");
    let input = json!({"freqs": freqs, "h": hj, "f": fj, "uh": uhj, "uf": ufj,
        "draws": 200000, "seed": 5});
    let path = dir.join("in.json");
    std::fs::write(&path, input.to_string()).unwrap();
    let out = std::process::Command::new(common::python())
        .arg(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/py/path_swap.py"
        ))
        .stdin(std::fs::File::open(&path).unwrap())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let reference: Value = serde_json::from_slice(&out.stdout).unwrap();
    eprintln!(
        "path spread: mortise {:?} {:?}; numpy {}",
        ours.louder, ours.interval_95_db, reference
    );
    let mut intermediate = 0;
    for a in 0..3 {
        for b in 0..3 {
            if a == b {
                continue;
            }
            let r = reference["louder"][a][b].as_f64().unwrap();
            let o = ours.louder[a][b];
            // ours is 1,000 draws: binomial standard error at most 0.016, so
            // 0.05 is three of them (the reference's own error is 0.001)
            assert!(
                (o - r).abs() < 0.05,
                "P(path {a} louder than {b}): {o} vs {r}"
            );
            intermediate += usize::from(r > 0.05 && r < 0.95);
        }
        let [lo, hi] = ours.interval_95_db[a].unwrap();
        let (rl, rh) = (
            reference["intervals"][a][0].as_f64().unwrap(),
            reference["intervals"][a][1].as_f64().unwrap(),
        );
        // quantiles of 1,000 draws, and first order against exact draws
        assert!(
            (lo - rl).abs() < 0.2 && (hi - rh).abs() < 0.2,
            "{lo} {hi} vs {rl} {rh}"
        );
    }
    // the case is one where ranks do swap: the check is not vacuous
    assert!(intermediate >= 2, "{:?}", reference["louder"]);
}

#[test]
fn tolerance_monte_carlo_gives_the_normal_quantiles() {
    // the room transfer known within a normal tolerance of 10 % and nothing
    // else uncertain: the bedroom's pressure is proportional to it, so its
    // level moves by 20·log10(1 + 0.1 z), z standard normal, and its 95 %
    // interval is L0 + 20·log10(1 − 1.96 · 0.1) = L0 − 1.897 dB to
    // L0 + 20·log10(1 + 1.96 · 0.1) = L0 + 1.562 dB (1.96: the standard
    // normal's 97.5 % quantile, any statistics table)
    let dir = common::scratch("run_uncertainty_tolerance");
    let recipe = demo_recipe(&dir, |r| {
        for c in r["components"].as_object_mut().unwrap().values_mut() {
            c.as_object_mut().unwrap().remove("uncertainty");
        }
        let o = r.as_object_mut().unwrap();
        o.remove("variants");
        o.remove("sweep");
        o.insert(
            "tolerances".into(),
            json!([{"scale": "room", "relative": 0.1}]),
        );
    });
    let rp = recipe.to_str().unwrap();
    let out = dir.join("out");
    let op = out.to_str().unwrap();
    // a plain run: the nominal values, and it says the tolerances wait for
    // a Monte Carlo
    let printed = cli(&["run", rp, "-o", op]).unwrap();
    assert!(
        printed.contains("the tolerances of scale 'room' are drawn by a Monte Carlo"),
        "{printed}"
    );
    assert!(
        printed.contains("bedroom at room:bed: 43.2 dB(A)"),
        "{printed}"
    );
    cli(&["run", rp, "-o", op, "--monte-carlo", "400", "--seed", "3"]).unwrap();
    let report: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let mc = &report["monte_carlo"];
    assert!(
        mc["method"]
            .as_str()
            .unwrap()
            .contains("the tolerance of scale 'room' (normal 10 %)"),
        "{mc}"
    );
    let bed = mc["levels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["step"] == "bedroom")
        .unwrap();
    let l0 = bed["nominal_db"].as_f64().unwrap();
    let lo = bed["interval_95_db"][0].as_f64().unwrap() - l0;
    let hi = bed["interval_95_db"][1].as_f64().unwrap() - l0;
    eprintln!("tolerance 10 %: 95 % interval {lo:+.3} … {hi:+.3} dB (closed form −1.897 … +1.562)");
    // quantiles of 400 draws: about ± 0.3 dB here (common practice: the
    // order statistic's spread, √(p(1 − p)/n) / density, in dB)
    assert!((lo + 1.897).abs() < 0.35, "{lo}");
    assert!((hi - 1.562).abs() < 0.35, "{hi}");
    // the standard deviation: 8.686 · 0.1 = 0.869 dB to first order
    let sd = bed["std_db"].as_f64().unwrap();
    assert!((sd - 0.869).abs() < 0.12, "{sd}");
}

/// The couple step's regularisation from the noise: `"tikhonov": "noise"`
/// and `"tsvd": "noise"` take their per-line values from the parts' stated
/// uncertainty, written in the step's report beside the lines they damped
/// or dropped; the operands are used or refused by name (a word other than
/// "noise", both at once, a λ of 0 or less, "noise" with no stated
/// uncertainty). The per-line values are the interface noise threshold,
/// whose formula is checked by hand in `uncertainty::interface_noise`.
#[test]
fn couple_step_regularised_from_the_noise_and_its_bad_operands() {
    let dir = common::scratch("run_uncertainty_tikhonov");
    let run = |edit: &dyn Fn(&mut Value), out: &str| {
        let recipe = demo_recipe(&dir, |r| {
            for c in ["casing", "bracket", "wall"] {
                r["components"][c]["uncertainty"] = json!({"relative": 0.01, "floor_db": -60});
            }
            r.as_object_mut().unwrap().remove("variants");
            edit(r);
        });
        let out = dir.join(out);
        cli(&["run", recipe.to_str().unwrap(), "-o", out.to_str().unwrap()]).map(|_| {
            let report: Value =
                serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap())
                    .unwrap();
            let step = report["steps"]
                .as_array()
                .unwrap()
                .iter()
                .find(|s| s["id"] == "mounted")
                .unwrap()
                .clone();
            step
        })
    };
    let mounted = |r: &mut Value| -> usize {
        r["steps"]
            .as_array()
            .unwrap()
            .iter()
            .position(|s| s["id"] == "mounted")
            .unwrap()
    };
    for (rule, method) in [("tikhonov", "tikhonov"), ("tsvd", "tsvd")] {
        let step = run(
            &|r: &mut Value| {
                let k = mounted(r);
                r["steps"][k][rule] = json!("noise");
            },
            &format!("out-{rule}"),
        )
        .unwrap();
        let reg = &step["interface"]["regularisation"];
        assert_eq!(reg["method"], method, "{step}");
        let rel: Vec<f64> = reg["relative"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        let n = step["interface"]["condition"].as_array().unwrap().len();
        assert_eq!(rel.len(), n);
        // 1 % on three parts: the interface noise is of the order of 1 % of σ_max
        let mut sorted = rel.clone();
        sorted.sort_by(|a, b| a.total_cmp(b));
        let median = sorted[n / 2];
        eprintln!(
            "{rule} from the noise: median {median:.2e}, {:.2e} … {:.2e}",
            sorted[0],
            sorted[n - 1]
        );
        assert!(median > 1e-4 && median < 0.2, "{median}");
        let notes = step["notes"].to_string();
        assert!(notes.contains("from the noise"), "{notes}");
        if rule == "tikhonov" {
            assert_eq!(step["interface"]["damped"].as_array().unwrap().len(), n);
        }
    }
    for (value, more, expect) in [
        (json!("loud"), None, "'tikhonov' is 'loud'"),
        (json!(-1e-3), None, "'tikhonov' is -0.001"),
        (json!(0.0), None, "'tikhonov' is 0"),
        (json!(1e-3), Some(json!(1e-6)), "give one"),
    ] {
        let e = run(
            &|r: &mut Value| {
                let k = mounted(r);
                r["steps"][k]["tikhonov"] = value.clone();
                if let Some(t) = &more {
                    r["steps"][k]["tsvd"] = t.clone();
                }
            },
            "out-bad",
        )
        .unwrap_err();
        let text = e.to_string();
        assert!(text.contains(expect), "{value}: {text}");
        assert!(text.contains("mounted"), "{value}: {text}");
    }
    // "noise" with no stated uncertainty on the parts
    let e = run(
        &|r: &mut Value| {
            for c in ["casing", "bracket", "wall"] {
                r["components"][c]
                    .as_object_mut()
                    .unwrap()
                    .remove("uncertainty");
            }
            let k = mounted(r);
            r["steps"][k]["tikhonov"] = json!("noise");
        },
        "out-none",
    )
    .unwrap_err();
    let text = e.to_string();
    assert!(
        text.contains("carry none") && text.contains("tikhonov"),
        "{text}"
    );
}
