//! `mortise listen`: the WAV of a predicted sound-pressure spectrum plays
//! the predicted spectrum. Checked outside the project: scipy reads the WAV
//! and scipy.signal.welch gives its PSD, integrated over base-ten 1/3-octave
//! bands (IEC 61260-1), against the band levels of the spectrum itself
//! (line mean squares summed per band, the definition of a band level);
//! within 0.5 dB in every band holding sound, and tones at their frequencies
//! within one FFT bin (1 Hz).

mod cli_support;
mod common;

use cli_support::mortise;
use mortise::frf::{Direction, Dof, FrfSet, SignalKind};
use mortise::io::{save, ExportFormat};
use mortise::units::Quantity;
use num_complex::Complex64;
use std::collections::BTreeMap;
use std::path::Path;

fn spectrum(kind: SignalKind, freqs: Vec<f64>, values: Vec<Complex64>) -> FrfSet {
    let mut s = FrfSet::zeros(
        "room",
        freqs,
        vec![Dof::new("room", "mic", Direction::Z)],
        vec![Dof::new("room", "ref", Direction::Z)],
        Quantity::Pressure,
        Quantity::Dimensionless,
    );
    s.signal = Some(kind);
    for (l, v) in values.into_iter().enumerate() {
        s.set(l, 0, 0, v);
    }
    s
}

/// Band levels (dB re 20 µPa) of the spectrum: line mean squares summed in
/// the base-ten 1/3-octave bands.
fn predicted(s: &FrfSet) -> BTreeMap<i32, f64> {
    let ms = mortise::levels::line_mean_squares(s, 0).unwrap();
    let mut out = BTreeMap::new();
    for k in -20..14 {
        let fm = 1000.0 * 10f64.powf(k as f64 / 10.0);
        let (lo, hi) = (fm * 10f64.powf(-0.05), fm * 10f64.powf(0.05));
        let sum: f64 = s
            .freqs
            .iter()
            .zip(&ms)
            .filter(|(f, _)| **f >= lo && **f < hi)
            .map(|(_, m)| m)
            .sum();
        if sum > 0.0 {
            out.insert(k, 10.0 * (sum / 4e-10).log10());
        }
    }
    out
}

fn check(name: &str, s: &FrfSet, tones: &[f64]) {
    let d = common::scratch(name);
    std::fs::write(
        d.join("room.csv"),
        save(std::slice::from_ref(s), ExportFormat::Csv).unwrap(),
    )
    .unwrap();
    let r = mortise(
        &d,
        &[
            "listen",
            "room.csv",
            "-o",
            "room.wav",
            "--seconds",
            "8",
            "--json",
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let j = r.json();
    let full = j["full_scale_pa"].as_f64().unwrap();
    assert!(j["caution"].as_str().unwrap().contains("low volume"));
    let wav = d.join("room.wav");
    let out = common::run_py(
        "listen_bands.py",
        &[
            wav.to_str().unwrap(),
            &full.to_string(),
            &tones.len().to_string(),
        ],
    );
    let got: serde_json::Value = serde_json::from_str(&out).unwrap();
    let want = predicted(s);
    let top = want.values().cloned().fold(f64::MIN, f64::max);
    let mut worst = 0.0f64;
    for (k, lw) in &want {
        if *lw < top - 40.0 {
            continue; // below the floor of interest
        }
        let lg = got["bands"][k.to_string()]
            .as_f64()
            .unwrap_or(f64::NEG_INFINITY);
        worst = worst.max((lg - lw).abs());
        assert!(
            (lg - lw).abs() <= 0.5,
            "{name}: band {k}: WAV {lg:.2} dB, predicted {lw:.2} dB"
        );
    }
    println!(
        "{name}: worst band difference {worst:.3} dB over {} bands",
        want.len()
    );
    let peaks: Vec<f64> = got["peaks"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    for t in tones {
        assert!(
            peaks.iter().any(|p| (p - t).abs() <= 1.0),
            "{name}: tone {t} Hz not among the PSD peaks {peaks:?}"
        );
    }
}

#[test]
fn tones_play_at_their_levels_and_frequencies() {
    // five tones of a peak spectrum, on a 1 Hz grid from 20 to 2000 Hz
    let freqs: Vec<f64> = (20..=2000).map(f64::from).collect();
    let tones = [
        (63.0, 0.02),
        (116.0, 0.05),
        (250.0, 0.01),
        (630.0, 0.004),
        (1600.0, 0.002),
    ];
    let values = freqs
        .iter()
        .map(|f| {
            tones
                .iter()
                .find(|t| t.0 == *f)
                .map_or(Complex64::new(0.0, 0.0), |t| {
                    Complex64::from_polar(t.1, f * 0.01)
                })
        })
        .collect();
    check(
        "listen_tones",
        &spectrum(SignalKind::Peak, freqs, values),
        &tones.map(|t| t.0),
    );
}

#[test]
fn broadband_psd_plays_at_its_band_levels() {
    // a PSD falling 3 dB per octave from 50 Hz to 4 kHz, on a 1 Hz grid
    let freqs: Vec<f64> = (50..=4000).map(f64::from).collect();
    let values = freqs
        .iter()
        .map(|f| Complex64::new(1e-4 * 100.0 / f, 0.0))
        .collect();
    check("listen_psd", &spectrum(SignalKind::Psd, freqs, values), &[]);
}

#[test]
fn what_is_not_a_pressure_spectrum_is_refused() {
    let d = common::scratch("listen_refused");
    let freqs: Vec<f64> = (1..=10).map(f64::from).collect();
    let mut frf = spectrum(SignalKind::Peak, freqs, vec![Complex64::new(1.0, 0.0); 10]);
    frf.signal = None;
    std::fs::write(d.join("frf.csv"), save(&[frf], ExportFormat::Csv).unwrap()).unwrap();
    let r = mortise(&d, &["listen", "frf.csv", "-o", "x.wav"]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(
        r.stderr.contains("no sound-pressure spectrum"),
        "{}",
        r.stderr
    );
    assert!(!Path::new(&d.join("x.wav")).exists());
    let r = mortise(&d, &["listen", "frf.csv", "-o", "x.wav", "--seconds", "0"]);
    assert_eq!(r.code, 1, "{}", r.stderr);
}
