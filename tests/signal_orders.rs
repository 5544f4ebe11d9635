//! Order tracks of a synthetic run-up: a known harmonic's amplitude read
//! back within 0.1 dB (the issue's check), from the speed profile and from
//! a tachometer channel. The signal is built from its angle, so the amplitude
//! of each order is known by construction; its frequency at each block is
//! order × rpm / 60 of the analytic speed.

use mortise::frf::{Dof, Provenance};
use mortise::signal::orders::{order_track, OrderSettings, Speed};
use mortise::units::Quantity;
use std::f64::consts::PI;

const FS: f64 = 8192.0;
const T: f64 = 20.0;

/// 600 to 3600 rpm linearly over 20 s: θ(t) = 10 t + 1.25 t² revolutions.
fn theta(t: f64) -> f64 {
    10.0 * t + 1.25 * t * t
}

fn run_up() -> Vec<f64> {
    let mut state = 0x9E3779B97F4A7C15u64;
    (0..(FS * T) as usize)
        .map(|i| {
            let t = i as f64 / FS;
            let th = theta(t);
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            let noise = ((state >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 0.02;
            3.0 * (2.0 * PI * 2.0 * th + 0.7).cos() + 1.0 * (2.0 * PI * 3.5 * th).cos() + noise
        })
        .collect()
}

fn check(speed: &Speed, phase_too: bool) {
    let x = run_up();
    let dof = Dof::parse("fan:1+Z", "").unwrap();
    let s = OrderSettings {
        order: 2.0,
        revolutions: 8,
        samples_per_rev: 64,
    };
    let set = order_track(
        &x,
        FS,
        &dof,
        Quantity::Acceleration,
        speed,
        &s,
        "o2",
        &Provenance::default(),
    )
    .unwrap();
    // θ(20 s) = 700 revolutions: 87 whole blocks of 8
    assert!(set.n_lines() >= 86, "{}", set.n_lines());
    let mut worst_db = 0.0f64;
    for (k, f) in set.freqs.iter().enumerate() {
        let v = set.get(k, 0, 0);
        let db = 20.0 * (v.norm() / 3.0).log10();
        worst_db = worst_db.max(db.abs());
        if phase_too {
            let d = (v.arg() - 0.7 + PI).rem_euclid(2.0 * PI) - PI;
            assert!(d.abs() < 0.01, "{f} Hz: phase {}", v.arg());
        }
        // frequency: order 2 at 20 to 120 Hz over the run-up
        assert!((19.0..=121.0).contains(f), "{f}");
    }
    println!(
        "order 2 over {} blocks: largest amplitude error {worst_db:.4} dB",
        set.n_lines()
    );
    assert!(worst_db < 0.1);
}

#[test]
fn order_amplitude_from_a_speed_profile() {
    let profile: Vec<(f64, f64)> = (0..=20)
        .map(|i| (i as f64, 600.0 + 150.0 * i as f64))
        .collect();
    check(&Speed::Profile(profile), true);
}

#[test]
fn order_amplitude_from_a_tachometer() {
    // four pulses a revolution: cos(2π·4θ) crossing 0.5 upwards
    let tach: Vec<f64> = (0..(FS * T) as usize)
        .map(|i| (2.0 * PI * 4.0 * theta(i as f64 / FS)).cos())
        .collect();
    check(
        &Speed::Tach {
            samples: tach,
            level: 0.5,
            pulses_per_rev: 4.0,
        },
        false,
    );
}

#[test]
fn orders_between_lines_and_stalls_are_refused() {
    let x = run_up();
    let dof = Dof::parse("fan:1+Z", "").unwrap();
    let prof = Speed::Profile(vec![(0.0, 600.0), (20.0, 3600.0)]);
    let bad = OrderSettings {
        order: 2.3,
        revolutions: 8,
        samples_per_rev: 64,
    };
    let e = order_track(
        &x,
        FS,
        &dof,
        Quantity::Acceleration,
        &prof,
        &bad,
        "o",
        &Provenance::default(),
    )
    .unwrap_err();
    assert!(e.to_string().contains("between lines"), "{e}");
    let up_down = Speed::Profile(vec![(0.0, 600.0), (10.0, 3600.0), (20.0, 600.0)]);
    let ok = OrderSettings {
        order: 2.0,
        revolutions: 8,
        samples_per_rev: 64,
    };
    let e = order_track(
        &x,
        FS,
        &dof,
        Quantity::Acceleration,
        &up_down,
        &ok,
        "o",
        &Provenance::default(),
    )
    .unwrap_err();
    assert!(e.to_string().contains("monotonically"), "{e}");
}

#[test]
fn orders_command_on_a_time_csv() {
    let dir = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("target/test-scratch/signal_orders");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let mut text = String::from("time [s]; fan:1+Z [m/s^2]\n");
    for (i, v) in run_up().iter().enumerate() {
        text.push_str(&format!("{:?}; {v:?}\n", i as f64 / FS));
    }
    let csv = dir.join("runup.csv");
    std::fs::write(&csv, text).unwrap();
    let out = dir.join("o2.csv");
    let said = mortise::cli::run_cli(&[
        "orders".into(),
        csv.to_str().unwrap().into(),
        "-o".into(),
        out.to_str().unwrap().into(),
        "--order".into(),
        "2".into(),
        "--speed".into(),
        "0:600,20:3600".into(),
    ])
    .unwrap();
    assert!(said.contains("87 blocks"), "{said}");
    let bytes = std::fs::read(&out).unwrap();
    let set = mortise::io::load(&bytes, "o2.csv", &Default::default())
        .unwrap()
        .sets
        .remove(0);
    assert_eq!(set.signal, Some(mortise::frf::SignalKind::Peak));
    for k in 0..set.n_lines() {
        let db = 20.0 * (set.get(k, 0, 0).norm() / 3.0).log10();
        assert!(db.abs() < 0.1, "{db}");
    }
    // the recipe step on the same file
    std::fs::write(
        dir.join("fan.recipe.json"),
        r#"{"format": "mortise-recipe", "version": 1, "components": {},
  "steps": [{"id": "o2", "op": "orders", "file": "runup.csv", "order": 2, "speed": [[0, 600], [20, 3600]]}],
  "outputs": ["o2"]}"#,
    )
    .unwrap();
    mortise::cli::run_cli(&[
        "run".into(),
        dir.join("fan.recipe.json").to_str().unwrap().into(),
        "-o".into(),
        dir.join("out").to_str().unwrap().into(),
    ])
    .unwrap();
    let bytes = std::fs::read(dir.join("out/o2.csv")).unwrap();
    let step = mortise::io::load(&bytes, "o2.csv", &Default::default())
        .unwrap()
        .sets
        .remove(0);
    assert_eq!(step.freqs, set.freqs);
    assert_eq!(step.data, set.data);
    // the speed given both ways, or not at all, is refused
    let e = mortise::cli::run_cli(&[
        "orders".into(),
        csv.to_str().unwrap().into(),
        "-o".into(),
        out.to_str().unwrap().into(),
        "--order".into(),
        "2".into(),
    ])
    .unwrap_err();
    assert!(e.to_string().contains("needs the speed"), "{e}");
}
