//! Triggered impact records on a synthetic hammer test
//! (tests/py/impact_test.py): hits, the double hit and the overload found
//! where the independent Python implementation of the same rules finds them,
//! and H1 and coherence over the accepted records equal numpy's; H1 close to
//! the exact FRF (scipy.signal.freqz) where the hammer excites.

mod common;

use mortise::frf::{Dof, Provenance};
use mortise::signal::impact::{impact_frf, ImpactSettings};
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
