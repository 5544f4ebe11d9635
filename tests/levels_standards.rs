//! Levels, weightings and bands against published values and scipy.

mod common;

use mortise::frf::{Dof, FrfSet, SignalKind};
use mortise::levels::*;
use mortise::units::Quantity;
use num_complex::Complex64;

/// Exact base-ten one-third-octave mid-band frequency of band x (IEC 61260-1:2014).
fn exact(x: i32) -> f64 {
    1000.0 * 10f64.powf(0.3).powf(x as f64 / 3.0)
}

#[test]
fn a_weighting_table_iec_61672_1() {
    // IEC 61672-1:2013 table of A weightings, rounded to 0.1 dB (values from memory).
    // The table is computed at the exact base-ten mid-band frequencies, not at
    // the nominal ones: at nominal 31.5 Hz the analytic form gives −39.53 dB,
    // which would not round to the tabled −39.4; at the exact 31.62 Hz it gives −39.44.
    let table = [
        (-15, -39.4),
        (-12, -26.2),
        (-9, -16.1),
        (-6, -8.6),
        (-3, -3.2),
        (0, 0.0),
        (3, 1.2),
        (6, 1.0),
        (9, -1.1),
    ];
    for (x, want) in table {
        let got = weighting_db(Weighting::A, exact(x));
        assert!(
            (got - want).abs() <= 0.05 + 1e-9,
            "A at {} Hz: {got:.3} dB, table {want}",
            exact(x)
        );
    }
    // the nominal-frequency reading is measurably different at 31.5 Hz
    assert!((weighting_db(Weighting::A, 31.5) - -39.4).abs() > 0.1);
}

#[test]
fn c_weighting_table_iec_61672_1() {
    // IEC 61672-1:2013 table of C weightings (from memory), exact mid-band frequencies.
    for (x, want) in [(-15, -3.0), (-12, -0.8), (-9, -0.2), (9, -3.0)] {
        let got = weighting_db(Weighting::C, exact(x));
        assert!(
            (got - want).abs() <= 0.05 + 1e-9,
            "C at {} Hz: {got:.3} dB, table {want}",
            exact(x)
        );
    }
}

#[test]
fn weightings_match_scipy_zpk() {
    // Reference: scipy.signal.freqs_zpk of the analog A and C transfer functions
    // built from the IEC 61672-1 poles (tests/py/levels_weighting.py).
    let fs: Vec<f64> = (0..40).map(|i| 10.0 * 1.2f64.powi(i)).collect();
    let args: Vec<String> = fs.iter().map(|f| format!("{f:.17e}")).collect();
    let argr: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
    let out = common::run_py("levels_weighting.py", &argr);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let mut worst: f64 = 0.0;
    for (k, f) in fs.iter().enumerate() {
        let a = v["A"][k].as_f64().unwrap();
        let c = v["C"][k].as_f64().unwrap();
        worst = worst
            .max((weighting_db(Weighting::A, *f) - a).abs())
            .max((weighting_db(Weighting::C, *f) - c).abs());
    }
    println!(
        "largest A/C difference to scipy over 10 Hz..{:.0} Hz: {worst:e} dB",
        fs[39]
    );
    assert!(worst < 1e-9, "{worst}");
}

#[test]
fn references_iso_1683() {
    // ISO 1683:2015 preferred reference values (from memory).
    // 1 mm/s RMS = 20 log10(1e-3 / 1e-9) = 120 dB re 1 nm/s
    let r = reference(Quantity::Velocity, false);
    assert!((db_rms(1e-3, r.value) - 120.0).abs() < 1e-12);
    assert_eq!(axis_label(Quantity::Velocity, false), "dB re 1 nm/s");
    // 1 Pa = 20 log10(1 / 20e-6) = 93.979 dB re 20 µPa
    let p = reference(Quantity::Pressure, false);
    assert!((db_rms(1.0, p.value) - 93.98).abs() < 0.005);
    assert_eq!(axis_label(Quantity::Pressure, false), "dB re 20 µPa");
    assert_eq!(reference(Quantity::Displacement, false).value, 1e-12);
    assert_eq!(reference(Quantity::Acceleration, false).value, 1e-6);
    assert_eq!(reference(Quantity::Force, false).value, 1e-6);
    // rotations: no standard reference, labelled as such
    let rl = axis_label(Quantity::Velocity, true);
    assert!(rl.contains("1 rad/s") && rl.contains("no standard"), "{rl}");
    // mean-square and power forms agree with the root-power form
    assert!((db_mean_square(1e-6, 1e-9) - 120.0).abs() < 1e-12);
    assert!((db_power(2.0, 1.0) - 3.0103).abs() < 1e-4);
}

#[test]
fn band_frequencies_iec_61260_1() {
    // IEC 61260-1:2014 base-ten: G = 10^(3/10), f_m = 1000 G^(x/b), edges f_m G^(±1/(2b)).
    let g = 10f64.powf(0.3);
    let b0 = Band::new(3, 0).unwrap();
    assert!((b0.center - 1000.0).abs() < 1e-9);
    assert!((b0.lower - 1000.0 / g.powf(1.0 / 6.0)).abs() < 1e-9);
    assert!((b0.lower - 891.2509).abs() < 1e-4);
    assert!((b0.upper - 1122.0185).abs() < 1e-4);
    // octave at 125 Hz nominal: exact 125.89 Hz, edges 89.13 and 177.83 Hz
    let o = Band::new(1, -3).unwrap();
    assert!((o.center - 125.8925).abs() < 1e-4, "{}", o.center);
    assert!((o.lower - 89.1251).abs() < 1e-4 && (o.upper - 177.8279).abs() < 1e-4);
    assert_eq!(o.label, "125");
    // even b: f_m = 1000 G^((2x+1)/(2b)); b = 2, x = 0 gives 1000 G^(1/4)
    let e = Band::new(2, 0).unwrap();
    assert!((e.center - 1000.0 * g.powf(0.25)).abs() < 1e-9);
    // nominal one-third-octave labels (IEC 61260-1 / preferred numbers, from memory)
    let labels: Vec<String> = (-16..=3).map(|x| Band::new(3, x).unwrap().label).collect();
    assert_eq!(
        labels,
        [
            "25", "31.5", "40", "50", "63", "80", "100", "125", "160", "200", "250", "315", "400",
            "500", "630", "800", "1k", "1.25k", "1.6k", "2k"
        ]
    );
    let oct: Vec<String> = (-5..=4).map(|x| Band::new(1, x).unwrap().label).collect();
    assert_eq!(
        oct,
        ["31.5", "63", "125", "250", "500", "1k", "2k", "4k", "8k", "16k"]
    );
    // adjacent bands share edges
    let bs = bands_covering(3, 20.0, 1000.0).unwrap();
    for w in bs.windows(2) {
        assert!((w[0].upper - w[1].lower).abs() < 1e-9);
    }
    assert!(bs[0].contains(20.0) && bs.last().unwrap().contains(1000.0));
}

fn flat_spectrum(freqs: &[f64], rms: f64) -> FrfSet {
    let mut s = FrfSet::zeros(
        "flat",
        freqs.to_vec(),
        vec![Dof::scalar("room", "bed")],
        vec![Dof::scalar("", "ref")],
        Quantity::Pressure,
        Quantity::Dimensionless,
    );
    s.signal = Some(SignalKind::Rms);
    for k in 0..freqs.len() {
        s.set(k, 0, 0, Complex64::new(rms, 0.0));
    }
    s
}

#[test]
fn band_levels_add_energetically_to_overall() {
    // Energetic addition of band levels (common practice): Σ 10^(L/10) of the
    // bands equals the overall level of all lines.
    let freqs: Vec<f64> = (1..=2000).map(|i| i as f64 * 0.5).collect();
    let s = flat_spectrum(&freqs, 0.01);
    let ms = line_mean_squares(&s, 0).unwrap();
    let r = reference(Quantity::Pressure, false).value;
    let bands = band_mean_squares(&freqs, &ms, 3, Weighting::Z).unwrap();
    let total = db_mean_square(overall_mean_square(&freqs, &ms, Weighting::Z), r);
    let from_bands = sum_levels_db(&bands.levels_db(r));
    println!("overall {total:.6} dB, energetic sum of bands {from_bands:.6} dB");
    assert!((total - from_bands).abs() < 1e-9);
    // overall of N equal lines is the line level + 10 log10 N
    let line = db_rms(0.01, r);
    assert!((total - (line + 10.0 * 2000f64.log10())).abs() < 1e-9);
    assert_eq!(bands.lines.iter().sum::<usize>(), 2000);
    // a flat narrow-band spectrum in 1/3 octaves rises 10 log10(2^(1/3)) ≈ 1 dB a band
    let l = bands.levels_db(r);
    let i = bands.bands.iter().position(|b| b.label == "500").unwrap();
    let per_band = l[i + 1] - l[i];
    assert!((per_band - 1.0).abs() < 0.1, "{per_band}");

    // A-weighted: every line weighted at its own frequency
    let a = overall_mean_square(&freqs, &ms, Weighting::A);
    let manual: f64 = freqs
        .iter()
        .map(|&f| 1e-4 * 10f64.powf(weighting_db(Weighting::A, f) / 10.0))
        .sum();
    assert!((a - manual).abs() < 1e-12 * manual);
    let ba = band_mean_squares(&freqs, &ms, 1, Weighting::A).unwrap();
    assert!((ba.mean_square.iter().sum::<f64>() - a).abs() < 1e-12 * a);
}

#[test]
fn psd_and_line_forms_agree() {
    // A PSD S (unit²/Hz) on a Δf grid holds S·Δf per line (definition of a PSD).
    let freqs: Vec<f64> = (1..=100).map(|i| i as f64 * 2.0).collect();
    let mut s = flat_spectrum(&freqs, 0.0);
    s.signal = Some(SignalKind::Psd);
    for k in 0..freqs.len() {
        s.set(k, 0, 0, Complex64::new(3.0, 0.0));
    }
    let ms = line_mean_squares(&s, 0).unwrap();
    assert!(ms.iter().all(|&m| (m - 6.0).abs() < 1e-12));
    // an explicit line width overrides the grid's
    let v = s.column(0, 0);
    let m1 = mean_squares_df(&v, &freqs, SignalKind::Psd, Some(1.5)).unwrap();
    assert!(m1.iter().all(|&m| (m - 4.5).abs() < 1e-12));
    assert!(mean_squares_df(&v, &freqs, SignalKind::Psd, Some(0.0)).is_err());
    s.signal = Some(SignalKind::Peak);
    s.set(0, 0, 0, Complex64::new(0.0, 2.0));
    // peak amplitude 2 → mean square 2²/2 = 2
    assert!((line_mean_squares(&s, 0).unwrap()[0] - 2.0).abs() < 1e-12);
    s.signal = None;
    assert!(line_mean_squares(&s, 0).is_err());
}

#[test]
fn spectrum_levels_of_a_velocity_line() {
    // 1 mm/s RMS at 1 kHz alone: 120 dB re 1 nm/s, A-weighting 0 dB at 1 kHz (IEC 61672-1)
    let freqs = vec![500.0, 1000.0, 2000.0];
    let mut s = FrfSet::zeros(
        "wall",
        freqs,
        vec![Dof::new("wall", "w1", mortise::frf::Direction::Z)],
        vec![Dof::scalar("", "ref")],
        Quantity::Velocity,
        Quantity::Dimensionless,
    );
    s.signal = Some(SignalKind::Rms);
    s.set(1, 0, 0, Complex64::new(0.0, 1e-3));
    let l = spectrum_levels(&s, 0, 3, Weighting::A).unwrap();
    assert_eq!(l.unit, "dB re 1 nm/s");
    assert!((l.overall_db - 120.0).abs() < 1e-9);
    assert!((l.line_db[1] - 120.0).abs() < 1e-9);
    let i = l.bands.iter().position(|b| b.label == "1k").unwrap();
    assert!((l.band_db[i] - 120.0).abs() < 1e-9);
    assert!(l.band_db[0].is_infinite());
    // even b: bands of width 1/6 octave tile the range without gaps
    let bs = bands_covering(6, 20.0, 20000.0).unwrap();
    for w in bs.windows(2) {
        assert!((w[0].upper - w[1].lower).abs() < 1e-9 * w[1].lower);
        assert!((w[0].upper / w[0].lower - 10f64.powf(0.3 / 6.0)).abs() < 1e-12);
    }
}
