//! Triggered impact records on a synthetic hammer test
//! (tests/py/impact_test.py): hits, the double hit and the overload found
//! where the independent Python implementation of the same rules finds them,
//! and H1 and coherence over the accepted records equal numpy's; H1 close to
//! the exact FRF (scipy.signal.freqz) where the hammer excites.

mod common;

use mortise::frf::{Dof, Provenance};
use mortise::signal::impact::{impact_esd, impact_frf, ImpactSettings};
use mortise::signal::{Channel, Estimator, Recording};
use mortise::units::Quantity;
use num_complex::Complex64;

fn cplx(v: &serde_json::Value) -> Vec<Complex64> {
    let re = v["re"].as_array().unwrap();
    let im = v["im"].as_array().unwrap();
    re.iter()
        .zip(im)
        .map(|(a, b)| Complex64::new(a.as_f64().unwrap(), b.as_f64().unwrap()))
        .collect()
}

#[test]
fn hammer_records_flags_and_frf_against_numpy() {
    let dir = common::scratch("signal_impact");
    let r: serde_json::Value =
        serde_json::from_str(&common::run_py("impact_test.py", &[dir.to_str().unwrap()])).unwrap();
    let fs = r["fs"].as_f64().unwrap();
    let n = r["n"].as_u64().unwrap() as usize;
    let bytes = std::fs::read(dir.join("impact.bin")).unwrap();
    let v: Vec<f64> = bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect();
    let rec = Recording {
        fs,
        channels: vec![
            Channel {
                dof: Dof::parse("beam:1+Z", "").unwrap(),
                quantity: Quantity::Force,
            },
            Channel {
                dof: Dof::parse("beam:7+Z", "").unwrap(),
                quantity: Quantity::Acceleration,
            },
        ],
        samples: v.chunks(n).map(|c| c.to_vec()).collect(),
    };
    let s = ImpactSettings {
        level: 20.0,
        pre_trigger_s: 0.01,
        length_s: 1.5,
        double_hit_fraction: 0.1,
        force_width_s: Some(0.02),
        decay_s: Some(0.3),
    };
    let limit = r["limit"].as_f64().unwrap();
    let (sets, hits, notes) = impact_frf(
        &rec,
        0,
        &[None, Some(limit)],
        &s,
        Estimator::H1,
        "beam",
        &Provenance::default(),
    )
    .unwrap();
    let want = r["hits"].as_array().unwrap();
    assert_eq!(hits.len(), want.len(), "{notes:?}");
    for (h, w) in hits.iter().zip(want) {
        assert_eq!(h.trigger as u64, w["trigger"].as_u64().unwrap());
        assert!((h.peak - w["peak"].as_f64().unwrap()).abs() < 1e-12 * h.peak);
        match (h.double_hit, w["double_after_s"].as_f64()) {
            (None, None) => {}
            (Some((dt, ratio)), Some(wdt)) => {
                assert!((dt - wdt).abs() < 1e-12);
                // the second pulse was made at 40 % of the first
                assert!((ratio - 0.4).abs() < 0.01, "{ratio}");
            }
            other => panic!("double hit at {}: {other:?}", h.trigger),
        }
        assert_eq!(!h.overloaded.is_empty(), w["overload"].as_bool().unwrap());
    }
    assert!(notes.iter().any(|n| n.contains("double hit")), "{notes:?}");
    assert!(
        notes.iter().any(|n| n.contains("overload on beam:7+Z")),
        "{notes:?}"
    );
    assert!(sets[0].provenance[0]
        .options
        .contains(&format!("from {} of 9", r["used"])));

    let h = &sets[0];
    let np_h = cplx(&r["h1"]);
    let scale = np_h.iter().fold(0.0f64, |m, v| m.max(v.norm()));
    let e = h
        .column(0, 0)
        .iter()
        .zip(&np_h)
        .fold(0.0f64, |m, (a, b)| m.max((a - b).norm()))
        / scale;
    let coh = h.coherence.as_ref().unwrap();
    let ec = coh
        .iter()
        .zip(r["coherence"].as_array().unwrap())
        .fold(0.0f64, |m, (a, b)| m.max((a - b.as_f64().unwrap()).abs()));
    println!("impact H1 against numpy: {e:e}, coherence {ec:e}");
    assert!(e <= 1e-10 && ec <= 1e-10);
    // against the exact FRF below 500 Hz, where the 2 ms pulse has most of
    // its force; the exponential window widens the resonance, so compare
    // away from it (below 80 Hz and 200-500 Hz)
    let truth = cplx(&r["true"]);
    let mut worst = 0.0f64;
    for (k, f) in h.freqs.iter().enumerate() {
        if (5.0..80.0).contains(f) || (200.0..500.0).contains(f) {
            worst = worst.max((h.get(k, 0, 0) - truth[k]).norm() / truth[k].norm());
        }
    }
    println!("impact H1 against the exact FRF off resonance: {worst:.4}");
    assert!(worst < 0.05);

    // the energy spectral density over the same accepted records against
    // numpy's one-sided 2|X|²Δt² (DC and Nyquist once), and Parseval: it
    // integrates to the records' mean energy Σ x² Δt
    let (esd, hits2, _) = impact_esd(
        &rec,
        0,
        &[None, Some(limit)],
        &s,
        "beam",
        &Provenance::default(),
    )
    .unwrap();
    assert_eq!(hits2.len(), hits.len());
    let len = r["record"].as_u64().unwrap() as f64;
    let df = fs / len;
    for (set, key, energy) in [
        (&esd[0], "esd_force", "energy_force"),
        (&esd[1], "esd_resp", "energy_resp"),
    ] {
        assert_eq!(set.signal, Some(mortise::frf::SignalKind::Esd));
        let want: Vec<f64> = r[key]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        let top = want.iter().fold(0.0f64, |m, v| m.max(*v));
        let mut e = 0.0f64;
        let mut integral = 0.0;
        for (k, f) in set.freqs.iter().enumerate() {
            let v = set.get(k, 0, 0).re;
            let j = (f / df).round() as usize;
            e = e.max((v - want[j]).abs() / top);
            integral += v * df;
        }
        let en = r[energy].as_f64().unwrap();
        let lines_all = set.freqs.len() == want.len();
        println!(
            "{key}: against numpy {e:e}; Σ ESD·Δf {integral:e} against the mean record energy {en:e} (all lines: {lines_all})"
        );
        assert!(e <= 1e-10, "{key}: {e}");
        assert!(lines_all, "the ESD holds every line from 0 Hz to fs/2");
        assert!(
            (integral / en - 1.0).abs() <= 1e-12,
            "{key}: {integral} {en}"
        );
    }

    // what a user runs: the same hammer test as a time CSV, through
    // `mortise spectrum --kind esd` and `mortise estimate --trigger`
    let mut csv = String::from("time [s],beam:1+Z [N],beam:7+Z [m/s^2]\n");
    for i in 0..rec.samples[0].len() {
        csv.push_str(&format!(
            "{},{},{}\n",
            i as f64 / fs,
            rec.samples[0][i],
            rec.samples[1][i]
        ));
    }
    let file = dir.join("hammer.csv");
    std::fs::write(&file, csv).unwrap();
    let run = |cmd: &str, extra: &[&str]| {
        let mut a: Vec<String> = vec![cmd.into(), file.to_str().unwrap().into()];
        for x in [
            "--trigger",
            "20",
            "--record-length",
            "1.5",
            "--force-width",
            "0.02",
            "--decay",
            "0.3",
        ]
        .iter()
        .chain(extra)
        {
            a.push(x.to_string());
        }
        mortise::cli::execute(&a)
    };
    let out = dir.join("esd.csv");
    let o = run(
        "spectrum",
        &[
            "-o",
            out.to_str().unwrap(),
            "--kind",
            "esd",
            "--input",
            "beam:1+Z",
        ],
    );
    assert!(o.error.is_none(), "{}", o.stderr);
    let back = mortise::load(
        &std::fs::read(&out).unwrap(),
        "esd.csv",
        &Default::default(),
    )
    .unwrap()
    .sets;
    assert_eq!(back.len(), 2);
    // a CSV channel has no full scale, so no record is left out for an
    // overload there: compared with the library's ESD without limits
    let (unlimited, _, _) =
        impact_esd(&rec, 0, &[None, None], &s, "beam", &Provenance::default()).unwrap();
    for b in &unlimited {
        let a = back
            .iter()
            .find(|a| a.out_qty == b.out_qty)
            .expect("the same quantity read back");
        assert_eq!(a.signal, Some(mortise::frf::SignalKind::Esd));
        let top = b.data.iter().fold(0.0f64, |m, v| m.max(v.re));
        let e = a
            .data
            .iter()
            .zip(&b.data)
            .fold(0.0f64, |m, (x, y)| m.max((x - y).norm() / top));
        assert!(
            e < 1e-9,
            "the CLI's ESD from the time CSV against the library: {e}"
        );
    }
    // an impact FRF from the same CSV (a UFF or CSV recording, not only a WAV)
    let frf = dir.join("frf.csv");
    let o = run(
        "estimate",
        &["-o", frf.to_str().unwrap(), "--input", "beam:1+Z"],
    );
    assert!(o.error.is_none(), "{}", o.stderr);
    // refused, naming what is missing or misplaced
    for (cmd, extra, says) in [
        (
            "spectrum",
            vec!["--kind", "psd"],
            "--trigger makes impact records",
        ),
        ("spectrum", vec!["--kind", "esd"], "takes one --input"),
    ] {
        let mut e = vec!["-o", out.to_str().unwrap()];
        e.extend(extra);
        let o = run(cmd, &e);
        assert!(o.stderr.contains(says), "{cmd} {e:?}: {}", o.stderr);
    }
    let o = mortise::cli::execute(&[
        "spectrum".to_string(),
        file.to_str().unwrap().into(),
        "-o".into(),
        out.to_str().unwrap().into(),
        "--kind".into(),
        "esd".into(),
    ]);
    assert!(
        o.stderr
            .contains("--kind esd is the energy of impact records"),
        "{}",
        o.stderr
    );
}

#[test]
fn impact_settings_and_missing_hits_are_refused() {
    let rec = Recording {
        fs: 1000.0,
        channels: vec![
            Channel {
                dof: Dof::parse("b:1+Z", "").unwrap(),
                quantity: Quantity::Force,
            },
            Channel {
                dof: Dof::parse("b:2+Z", "").unwrap(),
                quantity: Quantity::Acceleration,
            },
        ],
        samples: vec![vec![0.0; 5000], vec![0.0; 5000]],
    };
    let ok = ImpactSettings {
        level: 10.0,
        pre_trigger_s: 0.01,
        length_s: 1.0,
        double_hit_fraction: 0.1,
        force_width_s: None,
        decay_s: None,
    };
    let run = |s: ImpactSettings| {
        impact_frf(
            &rec,
            0,
            &[None, None],
            &s,
            Estimator::H1,
            "b",
            &Provenance::default(),
        )
        .unwrap_err()
    };
    assert!(run(ok).to_string().contains("lower the trigger level"));
    assert!(run(ImpactSettings {
        pre_trigger_s: 2.0,
        ..ok
    })
    .to_string()
    .contains("pre-trigger"));
    assert!(run(ImpactSettings { level: 0.0, ..ok })
        .to_string()
        .contains("trigger level"));
    assert!(run(ImpactSettings {
        double_hit_fraction: 1.5,
        ..ok
    })
    .to_string()
    .contains("double-hit"));
}
