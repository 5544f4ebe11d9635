//! `mortise spectrum` and `mortise estimate` on a WAV file (scipy.io.wavfile),
//! a UFF file of time responses (pyuff) and a time CSV against scipy.signal on the
//! samples as those libraries read them back (tests/py/time_files.py).

mod common;

use mortise::cli::run_cli;
use mortise::frf::SignalKind;
use mortise::io::{self, ImportOptions};

fn argv(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

fn arr(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn load(path: &std::path::Path) -> Vec<mortise::frf::FrfSet> {
    let bytes = std::fs::read(path).unwrap();
    io::load(&bytes, "out.csv", &ImportOptions::default())
        .unwrap()
        .sets
}

fn max_rel(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    let s = b.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    a.iter()
        .zip(b)
        .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()))
        / s
}

#[test]
fn estimate_and_spectrum_equal_scipy_on_wav_uff_and_csv() {
    let dir = common::scratch("cli_time_data");
    let d = dir.to_str().unwrap();
    let r: serde_json::Value =
        serde_json::from_str(&common::run_py("time_files.py", &[d])).unwrap();
    let wav = format!("{d}/rig.wav");
    let uff = format!("{d}/rig.uff");
    let chans = [
        "--channel",
        "1=rig:1+Z force 100 N",
        "--channel",
        "2=rig:2+Z acceleration 50 m/s^2",
    ];
    let common_opts = ["--segment", "1024", "--overlap", "0.5", "--window", "hann"];
    let csv = format!("{d}/rig.csv");
    for (src, file, extra) in [
        ("wav", &wav, &chans[..]),
        ("uff", &uff, &[][..]),
        ("csv", &csv, &[][..]),
    ] {
        let out = dir.join(format!("{src}-h1.csv"));
        let mut a = argv(&[
            "estimate",
            file,
            "-o",
            out.to_str().unwrap(),
            "--input",
            "rig:1+Z",
        ]);
        a.extend(argv(extra));
        a.extend(argv(&common_opts));
        let text = run_cli(&a).unwrap();
        let sets = load(&out);
        assert_eq!(sets.len(), 1, "{text}");
        let h = &sets[0];
        assert_eq!(h.kind(), mortise::frf::FrfKind::Accelerance);
        let want = &r[src];
        assert!(max_rel(&h.freqs, &arr(&want["freqs"])) < 1e-12);
        let col = h.column(0, 0);
        let re: Vec<f64> = col.iter().map(|v| v.re).collect();
        let im: Vec<f64> = col.iter().map(|v| v.im).collect();
        let e = max_rel(&re, &arr(&want["h1_re"])).max(max_rel(&im, &arr(&want["h1_im"])));
        let coh = h.coherence.as_ref().unwrap();
        let ec = max_rel(coh, &arr(&want["coherence"]));
        println!("{src}: H1 {e:e}, coherence {ec:e} against scipy");
        assert!(e <= 1e-10 && ec <= 1e-10, "{src}: {e:e} {ec:e}");
        if src == "wav" {
            assert!(text.contains("channel(s) 3 not described"), "{text}");
            // the streamed file's SHA-256, gathered while its blocks were read: hashlib's
            let want = common::run_py("sha256_of.py", &[file.as_str()]);
            assert_eq!(h.provenance[0].sha256, want.trim());
        }

        // the response's PSD
        let out = dir.join(format!("{src}-psd.csv"));
        let mut a = argv(&[
            "spectrum",
            file,
            "-o",
            out.to_str().unwrap(),
            "--kind",
            "psd",
        ]);
        a.extend(argv(extra));
        a.extend(argv(&common_opts));
        run_cli(&a).unwrap();
        let sets = load(&out);
        let s = sets
            .iter()
            .find(|s| s.out_qty == mortise::units::Quantity::Acceleration)
            .unwrap();
        assert_eq!(s.signal, Some(SignalKind::Psd));
        let psd: Vec<f64> = s.column(0, 0).iter().map(|v| v.re).collect();
        let e = max_rel(&psd, &arr(&want["psd"]));
        println!("{src}: PSD {e:e} against scipy.signal.welch");
        assert!(e <= 1e-10);
    }
}

#[test]
fn time_data_mistakes_are_refused_with_reasons() {
    let dir = common::scratch("cli_time_data_bad");
    let d = dir.to_str().unwrap();
    common::run_py("time_files.py", &[d]);
    let wav = format!("{d}/rig.wav");
    let uff = format!("{d}/rig.uff");
    let out = format!("{d}/x.csv");
    let bad_time = format!("{d}/bad-time.csv");
    std::fs::write(&bad_time, "time [s], a:1+Z [N]\n0, 1\n0.001, 2\n0.001, 3\n").unwrap();
    let cases: Vec<(Vec<&str>, &str)> = vec![
        // a time column that is not increasing: named with its line
        (
            vec!["spectrum", &bad_time, "-o", &out],
            "line 4: column 1: time 0.001 s does not exceed",
        ),
        // a window (segment) longer than the record
        (
            vec!["spectrum", &uff, "-o", &out, "--segment", "100000"],
            "longer than the record",
        ),
        (
            vec!["spectrum", &wav, "-o", &out],
            "describe the WAV file's channels",
        ),
        (
            vec![
                "spectrum",
                &uff,
                "-o",
                &out,
                "--channel",
                "1=a:1+Z force 1 N",
            ],
            "carry their DOFs",
        ),
        (
            vec!["spectrum", &uff, "-o", &out, "--kind", "peak"],
            "reference",
        ),
        (
            vec!["spectrum", &uff, "-o", &out, "--overlap", "1"],
            "overlap",
        ),
        (
            vec!["spectrum", &uff, "-o", &out, "--window", "kaiser"],
            "unknown window",
        ),
        (
            vec![
                "spectrum",
                &wav,
                "-o",
                &out,
                "--channel",
                "4=a:1+Z force 1 N",
            ],
            "has 3 channel",
        ),
        (
            vec![
                "spectrum",
                &wav,
                "-o",
                &out,
                "--channel",
                "1=a:1+Z force 1 furlong",
            ],
            "channel '1=a",
        ),
        (vec!["estimate", &uff, "-o", &out], "at least one --input"),
        (
            vec![
                "estimate", &uff, "-o", &out, "--input", "rig:1+Z", "--input", "rig:2+Z",
            ],
            "at least one input (force) and one response",
        ),
    ];
    for (a, text) in cases {
        let e = run_cli(&argv(&a)).unwrap_err();
        assert!(e.to_string().contains(text), "{a:?}: {e}");
    }
}

#[test]
fn estimate_from_a_hammer_test_wav() {
    let dir = common::scratch("cli_time_data_impact");
    let d = dir.to_str().unwrap();
    let r: serde_json::Value =
        serde_json::from_str(&common::run_py("impact_test.py", &[d])).unwrap();
    let wav = format!("{d}/impact.wav");
    let out = format!("{d}/impact-frf.csv");
    let resp = format!("2=beam:7+Z acceleration {} m/s^2", r["resp_full"]);
    let base = [
        "estimate",
        &wav,
        "-o",
        &out,
        "--input",
        "beam:1+Z",
        "--channel",
        "1=beam:1+Z force 200 N",
        "--channel",
        &resp,
    ];
    let mut a = argv(&base);
    a.extend(argv(&[
        "--trigger",
        "20",
        "--record-length",
        "1.5",
        "--pre-trigger",
        "0.01",
        "--force-width",
        "0.02",
        "--decay",
        "0.3",
        "--json",
    ]));
    let v: serde_json::Value = serde_json::from_str(&run_cli(&a).unwrap()).unwrap();
    assert_eq!(v["hits"].as_array().unwrap().len(), 9, "{v}");
    assert_eq!(v["segments"], r["used"]);
    let notes = v["notes"].to_string();
    assert!(
        notes.contains("double hit") && notes.contains("overload on beam:7+Z"),
        "{notes}"
    );
    let h = &load(std::path::Path::new(&out))[0];
    let re: Vec<f64> = h.column(0, 0).iter().map(|c| c.re).collect();
    let im: Vec<f64> = h.column(0, 0).iter().map(|c| c.im).collect();
    let e = max_rel(&re, &arr(&r["h1"]["re"])).max(max_rel(&im, &arr(&r["h1"]["im"])));
    println!("impact WAV through the command line: H1 {e:e} against numpy");
    assert!(e <= 1e-10);
    // Welch options with --trigger, impact options without it
    let mut a = argv(&base);
    a.extend(argv(&[
        "--trigger",
        "20",
        "--record-length",
        "1",
        "--window",
        "hann",
    ]));
    assert!(run_cli(&a)
        .unwrap_err()
        .to_string()
        .contains("does not use"));
    let mut a = argv(&base);
    a.extend(argv(&["--decay", "0.3"]));
    assert!(run_cli(&a)
        .unwrap_err()
        .to_string()
        .contains("give --trigger"));
}

#[test]
fn an_hour_of_eight_channels_needs_a_larger_work_budget() {
    // a 44-byte header claiming one hour of 8 channels of 16-bit PCM at
    // 51.2 kHz (2.95 GB of samples, which this file does not hold): the work
    // is estimated from the header and refused before any sample is read
    let dir = common::scratch("cli_time_data_budget");
    let frames: u64 = 51_200 * 3600;
    let data = (frames * 16) as u32;
    let mut b = Vec::new();
    b.extend_from_slice(b"RIFF");
    b.extend_from_slice(&(36u32.wrapping_add(data)).to_le_bytes());
    b.extend_from_slice(b"WAVEfmt ");
    b.extend_from_slice(&16u32.to_le_bytes());
    b.extend_from_slice(&1u16.to_le_bytes());
    b.extend_from_slice(&8u16.to_le_bytes());
    b.extend_from_slice(&51_200u32.to_le_bytes());
    b.extend_from_slice(&(51_200u32 * 16).to_le_bytes());
    b.extend_from_slice(&16u16.to_le_bytes());
    b.extend_from_slice(&16u16.to_le_bytes());
    b.extend_from_slice(b"data");
    b.extend_from_slice(&data.to_le_bytes());
    let wav = dir.join("hour.wav");
    std::fs::write(&wav, &b).unwrap();
    let w = wav.to_str().unwrap();
    let out = dir.join("x.csv");
    let mut a = argv(&[
        "spectrum",
        w,
        "-o",
        out.to_str().unwrap(),
        "--segment",
        "8192",
    ]);
    for c in 1..=8 {
        a.push("--channel".into());
        a.push(format!("{c}=bench:{c}+Z acceleration 100 m/s^2"));
    }
    let e = run_cli(&a).unwrap_err();
    assert!(e.to_string().contains("--work-budget"), "{e}");
    // with a larger budget it starts reading, and finds the file short
    a.extend(argv(&["--work-budget", "2e11"]));
    let e = run_cli(&a).unwrap_err();
    assert!(e.to_string().contains("the file ends at byte 44"), "{e}");
}
