//! Time data in the workspace (the page's recordings): WAV, UFF 58 time
//! response and time CSV files held as recordings, analysed into ordinary
//! result files, against scipy.signal on the samples Python wrote
//! (tests/py/time_files.py, tests/py/sine_wav.py).

mod common;

use mortise::error::ErrorKind;
use mortise::workspace::{TimeRequest, Workspace};
use serde_json::json;

fn arr(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn max_rel(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    let s = b.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    a.iter()
        .zip(b)
        .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()))
        / s
}

fn request(v: serde_json::Value) -> TimeRequest {
    serde_json::from_value(v).unwrap()
}

/// scipy.signal.csd / welch / coherence (hann, 1024, 512, detrend
/// 'constant') on the samples scipy.io.wavfile and pyuff read back: H1 and
/// coherence equal within 1e-10 relative, from all three file kinds.
#[test]
fn recordings_from_wav_uff_and_csv_give_scipy_h1_and_coherence() {
    let dir = common::scratch("workspace_time");
    let d = dir.to_str().unwrap();
    let r: serde_json::Value =
        serde_json::from_str(&common::run_py("time_files.py", &[d])).unwrap();
    let mut ws = Workspace::new();
    for (src, file, options) in [
        (
            "wav",
            "rig.wav",
            json!({"channels": ["1=rig:1+Z force 100 N", "2=rig:2+Z acceleration 50 m/s^2"]}),
        ),
        ("uff", "rig.uff", json!({})),
        ("csv", "rig.csv", json!({})),
    ] {
        let bytes = std::fs::read(dir.join(file)).unwrap();
        let sum = ws.load_file(file, &bytes, options).unwrap();
        let rec = sum.recording.as_ref().expect("a recording");
        assert_eq!(rec.channels.len(), 2, "{src}");
        assert_eq!(rec.samples, 2048 * 30, "{src}");
        assert_eq!(rec.sha256, mortise::io::sha256_hex(&bytes));
        let out = ws
            .analyse_time(
                file,
                &request(json!({"analysis": "frf", "window": "hann", "segment": 1024,
                    "overlap": 0.5, "detrend": "constant", "inputs": ["rig:1+Z"], "estimator": "h1"})),
            )
            .unwrap();
        assert_eq!(out.file, "rig.h1.csv");
        // Harris 1978: Hann coherent gain 0.5, ENBW 1.5 bins
        assert!((out.window.as_ref().unwrap().coherent_gain - 0.5).abs() < 1e-12);
        assert!((out.window.as_ref().unwrap().enbw_bins - 1.5).abs() < 1e-12);
        assert_eq!(out.segments, (2048 * 30 - 1024) / 512 + 1);
        let id = &out.summary.sets[0].id;
        let h = ws.set(id).unwrap();
        assert_eq!(h.provenance[0].file, file);
        assert_eq!(h.provenance[0].sha256, rec.sha256);
        let want = &r[src];
        assert!(max_rel(&h.freqs, &arr(&want["freqs"])) < 1e-12, "{src}");
        let col = h.column(0, 0);
        let re: Vec<f64> = col.iter().map(|v| v.re).collect();
        let im: Vec<f64> = col.iter().map(|v| v.im).collect();
        let e = max_rel(&re, &arr(&want["h1_re"])).max(max_rel(&im, &arr(&want["h1_im"])));
        assert!(e < 1e-10, "{src}: H1 differs from scipy by {e:e}");
        let coh = h.coherence.as_ref().expect("coherence kept with the FRF");
        let c: Vec<f64> = (0..h.n_lines()).map(|k| coh[k]).collect();
        let e = max_rel(&c, &arr(&want["coherence"]));
        assert!(e < 1e-10, "{src}: coherence differs from scipy by {e:e}");
        // the response's PSD: scipy.signal.welch
        let out = ws
            .analyse_time(
                file,
                &request(
                    json!({"analysis": "spectrum", "window": "hann", "segment": 1024,
                    "overlap": 0.5, "detrend": "constant", "kind": "psd"}),
                ),
            )
            .unwrap();
        let psd = out
            .summary
            .sets
            .iter()
            .map(|s| ws.set(&s.id).unwrap())
            .find(|s| s.outputs[0].to_string().contains("rig:2"))
            .unwrap();
        let p: Vec<f64> = psd.column(0, 0).iter().map(|v| v.re).collect();
        let w = arr(&want["psd"]);
        let e = max_rel(&p, &w[w.len() - p.len()..]);
        assert!(e < 1e-10, "{src}: PSD differs from scipy by {e:e}");
        ws.forget_file(file);
        ws.forget_file("rig.h1.csv");
        ws.forget_file("rig.psd.csv");
    }
}

/// A sine of known amplitude written by Python's wave module reads back
/// within 0.01 dB through a flat-top linear (peak) spectrum, off its bin
/// (Harris 1978: the flat-top window's scalloping loss is below 0.01 dB);
/// the FRF of channels 2 → 3 carries scipy.signal.coherence (1e-9).
#[test]
fn a_flat_top_peak_spectrum_reads_a_sines_amplitude_and_frf_carries_coherence() {
    let dir = common::scratch("workspace_time_sine");
    let wav = dir.join("bench.wav");
    let r: serde_json::Value =
        serde_json::from_str(&common::run_py("sine_wav.py", &[wav.to_str().unwrap()])).unwrap();
    let bytes = std::fs::read(&wav).unwrap();
    let mut ws = Workspace::new();
    let chans = json!({"channels": ["1=mic:1+X pressure 20 Pa", "2=rig:1+Z force 100 N",
        "3=rig:2+Z acceleration 50 m/s^2"]});
    let sum = ws.load_file("bench.wav", &bytes, chans).unwrap();
    let rec = sum.recording.unwrap();
    assert_eq!(rec.sample_rate_hz, 8192.0);
    assert_eq!(rec.duration_s, 8.0);
    let out = ws
        .analyse_time(
            "bench.wav",
            &request(
                json!({"analysis": "spectrum", "window": "flat-top", "segment": 8192,
                "overlap": 0.5, "kind": "peak", "reference": "mic:1+X"}),
            ),
        )
        .unwrap();
    let mic = out
        .summary
        .sets
        .iter()
        .map(|s| ws.set(&s.id).unwrap())
        .find(|s| s.outputs[0].to_string().contains("mic"))
        .unwrap();
    let f = r["f_sine"].as_f64().unwrap();
    let k = mic
        .freqs
        .iter()
        .enumerate()
        .min_by(|a, b| (a.1 - f).abs().total_cmp(&(b.1 - f).abs()))
        .unwrap()
        .0;
    let amp = mic.column(0, 0)[k].norm();
    let want = r["amplitude_pa"].as_f64().unwrap();
    let db = 20.0 * (amp / want).log10();
    assert!(db.abs() < 0.01, "{amp} Pa against {want} Pa: {db} dB");
    let out = ws
        .analyse_time(
            "bench.wav",
            &request(json!({"analysis": "frf", "window": "hann", "segment": 1024,
                "overlap": 0.5, "inputs": ["rig:1+Z"], "estimator": "H1"})),
        )
        .unwrap();
    // one set per output quantity: the acceleration's
    let h = out
        .summary
        .sets
        .iter()
        .map(|s| ws.set(&s.id).unwrap())
        .find(|s| s.outputs.iter().any(|d| d.to_string().contains("rig:2")))
        .unwrap();
    let o = h
        .outputs
        .iter()
        .position(|d| d.to_string().contains("rig:2"))
        .unwrap();
    let coh = h.coherence.as_ref().unwrap();
    let c: Vec<f64> = (0..h.n_lines()).map(|k| coh[o * h.n_lines() + k]).collect();
    let e = max_rel(&c, &arr(&r["coherence_23"]));
    assert!(e < 1e-9, "coherence differs from scipy by {e:e}");
}

/// A recording beyond the memory budget is refused, naming the file and
/// the size; what was loaded stays; every request field is used or refused.
#[test]
fn recordings_are_refused_beyond_the_budget_and_requests_are_checked() {
    let dir = common::scratch("workspace_time_budget");
    let wav = dir.join("bench.wav");
    common::run_py("sine_wav.py", &[wav.to_str().unwrap()]);
    let bytes = std::fs::read(&wav).unwrap();
    let chans = json!({"channels": ["1=mic:1+X pressure 20 Pa", "2=rig:1+Z force 100 N"]});
    let mut ws = Workspace::new();
    ws.load_file("first.wav", &bytes, chans.clone()).unwrap();
    let mut l = *ws.limits();
    // the first holds 2 × 65536 × 8 bytes; the second would double it
    l.memory_bytes = 2 * 65536 * 8 + 1000;
    ws.set_limits(l).unwrap();
    let e = ws
        .load_file("second.wav", &bytes, chans.clone())
        .unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget);
    assert_eq!(e.file.as_deref(), Some("second.wav"));
    assert!(e.message.contains("1048576 bytes"), "{}", e.message);
    assert!(ws.recording("first.wav").is_ok());
    assert!(ws.recording("second.wav").is_err());
    // room for both recordings' samples but not for their files' bytes,
    // which the workspace keeps too (for recipes and bundles): refused
    l.memory_bytes = 2 * (2 * 65536 * 8) + 1000;
    assert!(bytes.len() > 1000);
    ws.set_limits(l).unwrap();
    let e = ws
        .load_file("second.wav", &bytes, chans.clone())
        .unwrap_err();
    assert_eq!(e.kind, ErrorKind::Budget);
    assert!(
        e.message
            .contains(&format!("the file's {} bytes", bytes.len())),
        "{}",
        e.message
    );
    l.memory_bytes = 2 * (2 * 65536 * 8 + bytes.len()) as u64;
    ws.set_limits(l).unwrap();
    ws.load_file("second.wav", &bytes, chans.clone()).unwrap();
    ws.forget_file("second.wav");
    // without channel descriptions: refused, naming the field
    let e = ws.load_file("third.wav", &bytes, json!({})).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("channels"));
    let e = ws
        .load_file("third.wav", &bytes, json!({"channels": [], "colour": 1}))
        .unwrap_err();
    assert!(e.message.contains("colour"), "{}", e.message);
    for (bad, field) in [
        (
            json!({"analysis": "spectrum", "window": "hann", "segment": 1024, "overlap": 0.5,
            "kind": "psd", "estimator": "h1"}),
            "estimator",
        ),
        (
            json!({"analysis": "spectrum", "window": "hann", "segment": 1024, "overlap": 0.5,
            "kind": "psd", "reference": "rig:1+Z"}),
            "reference",
        ),
        (
            json!({"analysis": "frf", "window": "hann", "segment": 1024, "overlap": 0.5,
            "kind": "psd", "inputs": ["rig:1+Z"], "estimator": "h1"}),
            "kind",
        ),
        (
            json!({"analysis": "frf", "window": "hann", "segment": 1024, "overlap": 0.5,
            "estimator": "h1"}),
            "inputs",
        ),
        (
            json!({"analysis": "spectrum", "window": "tukey", "segment": 1024, "overlap": 0.5,
            "kind": "psd"}),
            "window",
        ),
        (
            json!({"analysis": "spectrum", "window": "hann", "segment": 1_000_000, "overlap": 0.5,
            "kind": "psd"}),
            "segment",
        ),
        (
            json!({"analysis": "spectrum", "window": "hann", "segment": 1024, "overlap": 1.0,
            "kind": "psd"}),
            "overlap",
        ),
    ] {
        let e = ws
            .analyse_time("first.wav", &request(bad.clone()))
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some(field), "{bad}: {e}");
    }
    let d = ws
        .time_view(
            "first.wav",
            None,
            Some(&request(
                json!({"analysis": "spectrum", "window": "hann", "segment": 8192,
                "overlap": 0.5, "kind": "psd"}),
            )),
            800.0,
            300.0,
        )
        .unwrap();
    // (65536 - 8192) / 4096 + 1 segments, as scipy.signal.welch cuts them
    assert!(d.summary.contains("15 analysis block(s)"), "{}", d.summary);
    ws.forget_file("first.wav");
    assert!(ws.recording("first.wav").is_err());
}

/// A bundle whose inputs are recordings (a WAV with its channel
/// descriptions, a UFF 58 time-response file) reopens in a fresh workspace:
/// the recordings come back as recordings (same samples' hash, same
/// channels), and the recipe run from the opened bundle gives the same
/// results bit for bit. With the WAV withheld, the bundle opens, names it
/// as missing, and dropping the same file in again restores the run.
/// (The check is against the first run's own numbers: a bundle that cannot
/// reopen, or reopens with different numbers, is lost data.)
#[test]
fn a_bundle_with_recordings_reopens_and_reruns_to_the_same_bits() {
    let dir = common::scratch("workspace_time_bundle");
    common::run_py("time_files.py", &[dir.to_str().unwrap()]);
    let recipe = r#"{
      "format": "mortise-recipe", "version": 1,
      "title": "bench recording in a bundle",
      "components": {},
      "steps": [
        {"id": "frf", "op": "estimate-frf", "file": "rig.uff", "inputs": ["rig:1+Z"], "segment": 1024},
        {"id": "wavfrf", "op": "estimate-frf", "file": "rig.wav", "inputs": ["rig:1+Z"], "segment": 1024,
         "channels": ["1=rig:1+Z force 100 N", "2=rig:2+Z acceleration 50 m/s^2"]}
      ],
      "outputs": ["frf", "wavfrf"]
    }"#;
    let wav = std::fs::read(dir.join("rig.wav")).unwrap();
    let uff = std::fs::read(dir.join("rig.uff")).unwrap();
    let channels =
        json!({"channels": ["1=rig:1+Z force 100 N", "2=rig:2+Z acceleration 50 m/s^2"]});
    let mut ws = Workspace::new();
    ws.load_file("rig.wav", &wav, channels.clone()).unwrap();
    ws.load_file("rig.uff", &uff, json!({})).unwrap();
    ws.run_recipe(recipe).unwrap();
    let first: Vec<_> = ws.results().0.into_iter().cloned().collect();
    assert_eq!(first.len(), 2);

    // everything included
    let made = ws
        .make_bundle(recipe, &mortise::workspace::BundleOptions::default())
        .unwrap();
    assert!(made.withheld.is_empty(), "{:?}", made.withheld);
    // the CLI runs the same bundle
    let path = dir.join("rig.bundle.json");
    std::fs::write(&path, &made.bytes).unwrap();
    let printed = mortise::cli::run_cli(&[
        "run".into(),
        path.to_str().unwrap().into(),
        "-o".into(),
        dir.join("out").to_str().unwrap().into(),
    ])
    .expect("the CLI runs a bundle holding recordings");
    assert!(printed.contains("wrote 2 output(s)"), "{printed}");
    let mut back = Workspace::new();
    let opened = back
        .open_bundle("rig.bundle.json", &made.bytes)
        .expect("a bundle holding a WAV and a UFF time file reopens");
    assert!(opened.missing.is_empty(), "{:?}", opened.missing);
    for name in ["rig.wav", "rig.uff"] {
        let a = ws.recording(name).unwrap();
        let b = back
            .recording(name)
            .unwrap_or_else(|e| panic!("{name} is a recording again: {e}"));
        assert_eq!(a.channels, b.channels, "{name}: channels");
        assert_eq!(a.fs, b.fs, "{name}: rate");
        assert_eq!(a.samples, b.samples, "{name}: samples");
    }
    back.run_recipe(recipe).unwrap();
    let again: Vec<_> = back.results().0.into_iter().cloned().collect();
    assert_eq!(again.len(), 2);
    for (x, y) in first.iter().zip(&again) {
        assert_eq!(x.name, y.name);
        assert_eq!(x.data, y.data, "{}: bit for bit", x.name);
    }

    // the WAV withheld: the bundle opens, names it; supplied again, it runs
    let mut opts = mortise::workspace::BundleOptions::default();
    opts.include_raw.insert("rig.wav".into(), false);
    let made = ws.make_bundle(recipe, &opts).unwrap();
    assert_eq!(made.withheld, vec!["rig.wav".to_string()]);
    let mut back = Workspace::new();
    let opened = back.open_bundle("rig.bundle.json", &made.bytes).unwrap();
    assert_eq!(opened.missing, vec!["rig.wav".to_string()]);
    let e = back.run_recipe(recipe).unwrap_err();
    assert!(e.to_string().contains("rig.wav"), "{e}");
    back.load_file("rig.wav", &wav, channels).unwrap();
    assert!(back.missing_inputs().is_empty());
    back.run_recipe(recipe).unwrap();
    let again: Vec<_> = back.results().0.into_iter().cloned().collect();
    for (x, y) in first.iter().zip(&again) {
        assert_eq!(
            x.data, y.data,
            "{}: bit for bit after supplying the WAV",
            x.name
        );
    }
}
