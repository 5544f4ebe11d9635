//! Impact records and order tracks in the workspace (the page's analyses of
//! a recording), against outside references: a hammer test written by
//! tests/py/hammer_wav.py (scipy.signal.lsim of a single-DOF system, the
//! double hit and the overload put in by construction) and a run-up written
//! by tests/py/runup_by_speed.py (numpy, an order whose amplitude is a known
//! function of speed).

mod common;

use mortise::frf::Provenance;
use mortise::limits::Limits;
use mortise::signal::analyse::{analyse_wav, Averaging, ChannelSpec, Job};
use mortise::signal::impact::ImpactSettings;
use mortise::signal::{Detrend, Estimator, Window};
use mortise::workspace::{TimeRequest, Workspace};
use serde_json::json;

fn request(v: serde_json::Value) -> TimeRequest {
    serde_json::from_value(v).unwrap()
}

fn strings(v: &serde_json::Value) -> Vec<String> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_str().unwrap().to_string())
        .collect()
}

/// The page's impact H1 (workspace) equals the command line's (the WAV
/// streamed through `analyse_wav`, as `mortise estimate --trigger` does)
/// within 1e-12 relative; the records left out are the double hit and the
/// overload the generator put in, with their reasons; H1 lies within 2 % of
/// the exact accelerance seen through the exponential window (Laplace shift
/// theorem, scipy.signal.lsim data) from 20 to 300 Hz; the time view marks
/// the two records; the ESD request gives one set per quantity.
#[test]
fn impact_records_on_the_page_equal_the_command_line_and_flag_the_double_hit() {
    let dir = common::scratch("workspace_time_records_impact");
    let wav = dir.join("hammer.wav");
    let r: serde_json::Value =
        serde_json::from_str(&common::run_py("hammer_wav.py", &[wav.to_str().unwrap()])).unwrap();
    let bytes = std::fs::read(&wav).unwrap();
    let channels = strings(&r["channels"]);
    let mut ws = Workspace::new();
    ws.load_file("hammer.wav", &bytes, json!({ "channels": channels }))
        .unwrap();
    let impact = json!({"trigger": r["trigger"], "record_length": r["record_length"],
        "pre_trigger": r["pre_trigger"], "force_width": r["force_width"], "decay": r["decay"]});
    let req = request(
        json!({"analysis": "frf", "inputs": [r["input"]], "estimator": "H1",
        "impact": impact}),
    );
    let out = ws.analyse_time("hammer.wav", &req).unwrap();
    assert_eq!(out.file, "hammer.impact-h1.csv");
    // the verdicts put in by construction
    let want: Vec<(f64, String)> = r["hits"]
        .as_array()
        .unwrap()
        .iter()
        .map(|h| {
            (
                h["at_s"].as_f64().unwrap(),
                h["verdict"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    assert_eq!(out.records.len(), want.len());
    for (rec, (at, verdict)) in out.records.iter().zip(&want) {
        assert!((rec.trigger_s - at).abs() < 0.002, "{rec:?} against {at}");
        match verdict.as_str() {
            "accepted" => assert!(rec.rejected.is_none(), "{rec:?}"),
            v => assert!(
                rec.rejected
                    .as_deref()
                    .is_some_and(|why| why.starts_with(v)),
                "{rec:?} should be '{v}'"
            ),
        }
    }
    assert_eq!((out.accepted, out.rejected), (4, 2));
    assert!(out
        .described
        .starts_with("4 of 6 impact record(s) averaged, 2 left out"));
    // the command line's path on the same file
    let specs: Vec<ChannelSpec> = channels
        .iter()
        .map(|c| ChannelSpec::parse(c, "").unwrap())
        .collect();
    let settings = ImpactSettings {
        level: r["trigger"].as_f64().unwrap(),
        pre_trigger_s: r["pre_trigger"].as_f64().unwrap(),
        length_s: r["record_length"].as_f64().unwrap(),
        double_hit_fraction: ImpactSettings::DEFAULT_DOUBLE_HIT,
        force_width_s: r["force_width"].as_f64(),
        decay_s: r["decay"].as_f64(),
    };
    let job = Job::Impact {
        input: mortise::frf::Dof::parse(r["input"].as_str().unwrap(), "").unwrap(),
        settings,
        estimator: Estimator::H1,
    };
    let reader =
        mortise::io::wav::WavReader::new(std::fs::File::open(&wav).unwrap(), "hammer.wav").unwrap();
    let avg = Averaging {
        segment: 2,
        overlap: 0.0,
        window: Window::Rectangular,
        detrend: Detrend::None,
    };
    let cli = analyse_wav(
        reader,
        "hammer.wav",
        &specs,
        &avg,
        &job,
        "hammer",
        &Provenance::default(),
        &Limits::default(),
        &mut |_, _| {},
    )
    .unwrap();
    let id = &out.summary.sets[0].id;
    let page = ws.set(id).unwrap();
    let c = &cli.sets[0];
    assert_eq!(page.freqs, c.freqs);
    let (mut worst, mut exact_worst) = (0.0f64, 0.0f64);
    for k in 0..c.n_lines() {
        let (a, b) = (page.get(k, 0, 0), c.get(k, 0, 0));
        worst = worst.max((a - b).norm() / b.norm());
        let f = c.freqs[k];
        if (20.0..=300.0).contains(&f) {
            let i = (f.round() as usize) - 1;
            let e = num_complex::Complex64::new(
                r["exact_re"][i].as_f64().unwrap(),
                r["exact_im"][i].as_f64().unwrap(),
            );
            exact_worst = exact_worst.max((a - e).norm() / e.norm());
        }
    }
    println!("# measure page impact H1 against the command line's: worst relative {worst:.2e}; against the exact windowed accelerance 20-300 Hz: {exact_worst:.4}");
    assert!(worst <= 1e-12, "{worst:e}");
    assert!(exact_worst < 0.02, "{exact_worst}");
    assert_eq!(page.coherence, c.coherence);
    // the time view: six records, two marked with their reasons
    let d = ws
        .time_view("hammer.wav", None, Some(&req), 900.0, 320.0)
        .unwrap();
    assert!(
        d.summary
            .contains("6 analysis block(s) of 2048 samples, 2 left out (marked)"),
        "{}",
        d.summary
    );
    assert!(d.svg.contains("left out: double hit"), "double hit title");
    assert!(
        d.svg.contains("left out: overload on bracket:5+Z"),
        "overload title"
    );
    // the energy spectral density over the same records
    let esd = ws
        .analyse_time(
            "hammer.wav",
            &request(
                json!({"analysis": "spectrum", "kind": "esd", "inputs": [r["input"]],
                "impact": {"trigger": 20, "record_length": 1}}),
            ),
        )
        .unwrap();
    assert_eq!(esd.file, "hammer.esd.csv");
    assert_eq!(esd.summary.sets.len(), 2, "force and acceleration apart");
    assert!(esd
        .summary
        .sets
        .iter()
        .all(|s| s.signal.as_deref() == Some("esd")));
    // every field used or refused
    for (bad, field) in [
        (
            json!({"analysis": "frf", "inputs": ["bracket:1+Z"], "estimator": "H1",
            "window": "hann", "impact": {"trigger": 20, "record_length": 1}}),
            "window",
        ),
        (
            json!({"analysis": "spectrum", "kind": "psd", "inputs": ["bracket:1+Z"],
            "impact": {"trigger": 20, "record_length": 1}}),
            "kind",
        ),
        (
            json!({"analysis": "spectrum", "kind": "esd", "window": "hann", "segment": 1024,
            "overlap": 0.5}),
            "impact",
        ),
        (
            json!({"analysis": "frf", "inputs": ["bracket:1+Z", "bracket:5+Z"], "estimator": "H1",
            "impact": {"trigger": 20, "record_length": 1}}),
            "inputs",
        ),
        (
            json!({"analysis": "frf", "inputs": ["bracket:1+Z"], "estimator": "H1",
            "impact": {"trigger": 20, "record_length": 100}}),
            "record length",
        ),
    ] {
        let e = ws
            .analyse_time("hammer.wav", &request(bad.clone()))
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some(field), "{bad}: {e}");
    }
    let e = serde_json::from_value::<TimeRequest>(json!({"analysis": "frf",
        "impact": {"trigger": 20, "record_length": 1, "hammer": "steel"}}))
    .unwrap_err();
    assert!(e.to_string().contains("hammer"), "{e}");
}

/// Worst amplitude error (dB) and phase error (rad) of a table against the
/// run-up's known order 2 (tests/py/runup_by_speed.py).
fn against_known(rows: &[[f64; 3]], r: &serde_json::Value) -> (f64, f64) {
    let speeds = r["speeds"].as_array().unwrap();
    let (mut db, mut ph) = (0.0f64, 0.0f64);
    for row in rows {
        let i = speeds
            .iter()
            .position(|s| (s.as_f64().unwrap() - row[0]).abs() < 1e-9)
            .unwrap_or_else(|| panic!("speed {} is not on the reference's grid", row[0]));
        let want =
            num_complex::Complex64::new(r["re"][i].as_f64().unwrap(), r["im"][i].as_f64().unwrap());
        let got = num_complex::Complex64::new(row[1], row[2]);
        db = db.max((20.0 * (got.norm() / want.norm()).log10()).abs());
        ph = ph.max((got / want).arg().abs());
    }
    (db, ph)
}

/// `mortise orders --by-speed` on a numpy run-up whose order 2 changes with
/// speed recovers it within 0.1 dB (the bound) at every step, from the
/// speed profile and from the tachometer; the table reads as a speed
/// sweep's orders entries; the page's order tracks give the same table.
#[test]
fn order_by_speed_tables_recover_a_speed_dependent_order() {
    let dir = common::scratch("workspace_time_records_orders");
    let csv = dir.join("runup.csv");
    let r: serde_json::Value = serde_json::from_str(&common::run_py(
        "runup_by_speed.py",
        &[csv.to_str().unwrap()],
    ))
    .unwrap();
    let out = dir.join("o2.csv");
    let argv = |extra: &[&str]| -> Vec<String> {
        let mut v = vec![
            "orders",
            csv.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
            "--order",
            "2",
            "--by-speed",
            "2.5",
        ];
        v.extend_from_slice(extra);
        v.iter().map(|s| s.to_string()).collect()
    };
    let mut tables = Vec::new();
    // phase bounds: the profile's angle is exact (0.02 rad); a square-wave
    // tachometer places each pulse within half a sample, so order 2's phase
    // within 2π · 2 · 60 rev/s / (2 · 4096 Hz) = 0.092 rad at the top speed
    for (how, extra, phase_bound) in [
        (
            "speed profile",
            vec!["--speed", r["speed"].as_str().unwrap()],
            0.02,
        ),
        (
            "tachometer",
            vec![
                "--tach",
                "tach:1+Z",
                "--tach-level",
                "0.5",
                "--pulses-per-rev",
                "1",
            ],
            0.092,
        ),
    ] {
        let text = mortise::cli::run_cli(&argv(&extra)).unwrap();
        assert!(text.contains("o2.by-speed.json"), "{text}");
        let bytes = std::fs::read(dir.join("o2.by-speed.json")).unwrap();
        let entries: Vec<mortise::recipe::OrderForce> = serde_json::from_slice(&bytes).unwrap();
        let fan = entries.iter().find(|e| e.dof == "fan:1+Z").unwrap();
        assert_eq!(fan.order, 2.0);
        let rows = fan.by_speed.as_ref().unwrap();
        // every multiple of 2.5 rev/s inside the tracked speeds (about 11 to 59 rev/s)
        assert!(rows.len() >= 18, "{how}: {} rows", rows.len());
        assert!(rows.iter().all(|row| (row[0] / 2.5).fract() == 0.0));
        let (db, ph) = against_known(rows, &r);
        println!("# measure order-by-speed table ({how}): {} rows from {} to {} rev/s, worst {db:.4} dB, {ph:.4} rad", rows.len(), rows[0][0], rows[rows.len() - 1][0]);
        assert!(db < 0.1, "{how}: {db} dB");
        assert!(ph < phase_bound, "{how}: {ph} rad");
        // the sweep reads between rows linearly: halfway is the rows' mean
        let mid = fan.amplitude_at(rows[0][0] + 1.25).unwrap();
        assert!((mid.re - 0.5 * (rows[0][1] + rows[1][1])).abs() < 1e-12);
        tables.push(bytes);
    }
    // the page: the same order tracks and table from the recording
    let mut ws = Workspace::new();
    ws.load_file("runup.csv", &std::fs::read(&csv).unwrap(), json!({}))
        .unwrap();
    let page = ws
        .analyse_time(
            "runup.csv",
            &request(json!({"analysis": "orders", "orders": {"order": 2,
                "speed": r["speed"], "by_speed": 2.5}})),
        )
        .unwrap();
    assert_eq!(page.file, "runup.order2.csv");
    let page_tables = page.by_speed.unwrap();
    let cli: Vec<mortise::recipe::OrderForce> = serde_json::from_slice(&tables[0]).unwrap();
    assert_eq!(page_tables.len(), cli.len());
    for (p, c) in page_tables.iter().zip(&cli) {
        assert_eq!(p.dof, c.dof);
        assert_eq!(Some(&p.by_speed), c.by_speed.as_ref());
    }
    // fields used or refused
    for (bad, field) in [
        (
            json!({"analysis": "orders", "orders": {"order": 2}}),
            "speed",
        ),
        (
            json!({"analysis": "orders", "orders": {"order": 2, "speed": "0:600,20:3600", "tach_level": 1}}),
            "tach_level",
        ),
        (
            json!({"analysis": "orders", "window": "hann", "orders": {"order": 2, "speed": "0:600,20:3600"}}),
            "window",
        ),
        (
            json!({"analysis": "orders", "orders": {"order": 2, "speed": "0:600,20:3600", "by_speed": 100}}),
            "by_speed",
        ),
        (
            json!({"analysis": "orders", "orders": {"order": 2, "speed": "0:600;20:3600"}}),
            "speed",
        ),
    ] {
        let e = ws
            .analyse_time("runup.csv", &request(bad.clone()))
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some(field), "{bad}: {e}");
    }
}
