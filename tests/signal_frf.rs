//! H1, H2, Hv and coherence from a seeded random test of a single-DOF
//! system with output noise, and a two-input case, against numpy/scipy
//! (tests/py/signal_frf.py) and against the theory of FRF estimation
//! (Bendat & Piersol, *Random Data*, 4th ed., 2010, ch. 9).

mod common;

use mortise::frf::{Dof, FrfSet, Provenance};
use mortise::signal::{self, Channel, Detrend, Estimator, WelchSettings, Window};
use mortise::units::Quantity;
use num_complex::Complex64;

fn read_bin(path: &std::path::Path, n: usize) -> Vec<Vec<f64>> {
    let bytes = std::fs::read(path).unwrap();
    let v: Vec<f64> = bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect();
    v.chunks(n).map(|c| c.to_vec()).collect()
}

fn cplx(v: &serde_json::Value) -> Vec<Complex64> {
    let re = v["re"].as_array().unwrap();
    let im = v["im"].as_array().unwrap();
    re.iter()
        .zip(im)
        .map(|(a, b)| Complex64::new(a.as_f64().unwrap(), b.as_f64().unwrap()))
        .collect()
}

fn channel(name: &str, q: Quantity) -> Channel {
    Channel {
        dof: Dof::parse(name, "").unwrap(),
        quantity: q,
    }
}

fn settings(segment: usize) -> WelchSettings {
    WelchSettings {
        segment,
        overlap: segment / 2,
        window: Window::Hann,
        detrend: Detrend::Constant,
    }
}

/// Largest |a − b| over the largest |b|.
fn rel(a: &[Complex64], b: &[Complex64]) -> f64 {
    let s = b.iter().fold(0.0f64, |m, v| m.max(v.norm()));
    a.iter()
        .zip(b)
        .fold(0.0f64, |m, (x, y)| m.max((x - y).norm()))
        / s
}

fn est(
    x: &[Vec<f64>],
    len: usize,
    chans: &[Channel],
    (inputs, outputs): (&[usize], &[usize]),
    e: Estimator,
    fs: f64,
    seg: usize,
) -> (FrfSet, usize) {
    let v: Vec<&[f64]> = x.iter().map(|c| &c[..len]).collect();
    let a = signal::average(fs, &v, inputs, settings(seg)).unwrap();
    let mut s =
        signal::estimate(&a, chans, inputs, outputs, e, "h", &Provenance::default()).unwrap();
    assert_eq!(s.len(), 1);
    (s.remove(0), a.segments)
}

#[test]
fn single_input_estimators_against_scipy_and_theory() {
    let dir = common::scratch("signal_frf");
    let out = common::run_py("signal_frf.py", &[dir.to_str().unwrap()]);
    let r: serde_json::Value = serde_json::from_str(&out).unwrap();
    let fs = r["fs"].as_f64().unwrap();
    let n = r["n"].as_u64().unwrap() as usize;
    let seg = r["segment"].as_u64().unwrap() as usize;
    let sn = r["sigma_n"].as_f64().unwrap();
    let x = read_bin(&dir.join("siso.bin"), n);
    let chans = [
        channel("rig:1+Z", Quantity::Force),
        channel("rig:2+Z", Quantity::Acceleration),
    ];
    let truth = &cplx(&r["true"])[1..];
    let freqs: Vec<f64> = r["freqs"].as_array().unwrap()[1..]
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();

    let (h1, nd) = est(&x, n, &chans, (&[0], &[1]), Estimator::H1, fs, seg);
    let (h2, _) = est(&x, n, &chans, (&[0], &[1]), Estimator::H2, fs, seg);
    let (hv, _) = est(&x, n, &chans, (&[0], &[1]), Estimator::Hv, fs, seg);
    assert_eq!(h1.freqs, freqs);
    assert_eq!(h1.kind(), mortise::frf::FrfKind::Accelerance);
    // the same spectra as scipy.signal.csd / welch: H1 = G_fy/G_ff, the
    // closed-form total least squares Hv, coherence, ≤ 1e-10
    let e1 = rel(&h1.column(0, 0), &cplx(&r["h1"])[1..]);
    let ev = rel(&hv.column(0, 0), &cplx(&r["hv"])[1..]);
    let coh = h1.coherence.clone().unwrap();
    let sc: Vec<f64> = r["coherence"].as_array().unwrap()[1..]
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    let ec = coh
        .iter()
        .zip(&sc)
        .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()));
    println!("against scipy: H1 {e1:e}, Hv {ev:e}, coherence {ec:e} (largest, relative to the largest value)");
    assert!(e1 <= 1e-10 && ev <= 1e-10 && ec <= 1e-10);

    // band 50-200 Hz: coherence from 0.3 to 1
    let band: Vec<usize> = (0..freqs.len())
        .filter(|&k| (50.0..=200.0).contains(&freqs[k]))
        .collect();
    let mut h2_bias = 0.0;
    let mut h2_theory = 0.0;
    let mut coh_err = 0.0f64;
    for &k in &band {
        let (a1, a2, av) = (
            h1.get(k, 0, 0).norm(),
            h2.get(k, 0, 0).norm(),
            hv.get(k, 0, 0).norm(),
        );
        // |H1| ≤ |Hv| ≤ |H2| (the TLS estimate lies between; |H2| = |H1|/γ²)
        assert!(
            a1 <= av * (1.0 + 1e-12) && av <= a2 * (1.0 + 1e-12),
            "{}",
            freqs[k]
        );
        assert!((a2 * coh[k] - a1).abs() <= 1e-10 * a1);
        // with output noise of PSD G_nn: H2 = H (1 + G_nn / (|H|² G_ff)) in
        // expectation and γ² = 1 / (1 + G_nn / (|H|² G_ff)) (Bendat & Piersol
        // 2010, §9.2); white force and noise: G_nn / G_ff = σ_n² / σ_f², σ_f = 1
        let snr = sn * sn / truth[k].norm_sqr();
        h2_bias += a2 / truth[k].norm() - 1.0;
        h2_theory += snr;
        coh_err = coh_err.max((coh[k] - 1.0 / (1.0 + snr)).abs());
    }
    let nb = band.len() as f64;
    println!(
        "{nd} averages, 50-200 Hz: mean H2 bias {:.4} (theory {:.4}); largest |coherence - theory| {coh_err:.4}",
        h2_bias / nb,
        h2_theory / nb
    );
    assert!(((h2_bias - h2_theory) / h2_theory).abs() < 0.1);
    assert!(coh_err < 0.1);

    // H1 converges to the true FRF as averages grow: its relative error in
    // the band falls like 1/√n_d (random error of |H1|: √(1−γ²) / (|γ| √(2 n_d)),
    // Bendat & Piersol 2010, table 9.6)
    let mut last = f64::INFINITY;
    for len in [seg * 6, seg * 25, n] {
        let (h, nd) = est(&x, len, &chans, (&[0], &[1]), Estimator::H1, fs, seg);
        let (mut err, mut theory) = (0.0, 0.0);
        for &k in &band {
            err += ((h.get(k, 0, 0) - truth[k]).norm() / truth[k].norm()).powi(2);
            let g = 1.0 / (1.0 + sn * sn / truth[k].norm_sqr());
            theory += (1.0 - g) / (g * 2.0 * nd as f64);
        }
        let (err, theory) = ((err / nb).sqrt(), (theory / nb).sqrt());
        println!("H1 with {nd} averages: RMS relative error {err:.4} in 50-200 Hz (magnitude theory {theory:.4})");
        assert!(err < last);
        // magnitude and phase errors together: about √2 × the magnitude's
        assert!(err < 2.5 * theory, "{err} vs {theory}");
        last = err;
    }
    assert!(last < 0.1);
}

#[test]
fn two_inputs_against_numpy_and_the_true_frfs() {
    let dir = common::scratch("signal_frf_mimo");
    let out = common::run_py("signal_frf.py", &[dir.to_str().unwrap()]);
    let r: serde_json::Value = serde_json::from_str(&out).unwrap();
    let fs = r["fs"].as_f64().unwrap();
    let n = r["n"].as_u64().unwrap() as usize;
    let seg = r["segment"].as_u64().unwrap() as usize;
    let x = read_bin(&dir.join("mimo.bin"), n);
    let chans = [
        channel("s:1+Z", Quantity::Force),
        channel("s:2+Z", Quantity::Force),
        channel("s:3+Z", Quantity::Acceleration),
        channel("s:4+Z", Quantity::Acceleration),
    ];
    let (h, _) = est(&x, n, &chans, (&[0, 1], &[2, 3]), Estimator::H1, fs, seg);
    assert_eq!(h.n_out(), 2);
    assert_eq!(h.n_in(), 2);
    let lines = h.n_lines();
    // numpy: H1 = S_xf S_ff⁻¹ per line, multiple coherence S_xf S_ff⁻¹ S_fx / S_xx
    let np_h = &cplx(&r["mimo_h1"])[4..];
    let e = rel(&h.data, np_h);
    let mc = h.coherence.clone().unwrap();
    let np_c = &r["mimo_coherence"].as_array().unwrap()[1..];
    let mut ec = 0.0f64;
    for k in 0..lines {
        for o in 0..2 {
            let c = np_c[k][o].as_f64().unwrap();
            for j in 0..2 {
                ec = ec.max((mc[(k * 2 + o) * 2 + j] - c).abs());
            }
        }
    }
    println!("two inputs against numpy: H1 {e:e}, multiple coherence {ec:e}");
    assert!(e <= 1e-10 && ec <= 1e-10);
    // and against the true FRFs where each has signal (40-250 Hz)
    let truth = &cplx(&r["mimo_true"])[4..];
    let (mut worst, mut worst_f, mut sum, mut count) = (0.0f64, 0.0, 0.0, 0.0);
    for k in 0..lines {
        if !(40.0..=250.0).contains(&h.freqs[k]) {
            continue;
        }
        let scale = (0..4).map(|m| truth[k * 4 + m].norm()).fold(0.0, f64::max);
        for m in 0..4 {
            let e = (h.data[k * 4 + m] - truth[k * 4 + m]).norm() / scale;
            if e > worst {
                (worst, worst_f) = (e, h.freqs[k]);
            }
            sum += e * e;
            count += 1.0;
        }
    }
    let rms = (sum / count).sqrt();
    // the largest error sits at the 60 Hz resonance (damping ratio 0.03,
    // half-power bandwidth 3.6 Hz on 1 Hz lines): the Hann window's leakage
    // bias, not noise
    println!("two inputs, against the true FRFs, 40-250 Hz, relative to the line's largest: RMS {rms:.4}, largest {worst:.4} at {worst_f} Hz");
    assert!(rms < 0.02 && worst < 0.1);

    // H2 with two inputs is refused, naming the way out
    let v: Vec<&[f64]> = x.iter().map(|c| c.as_slice()).collect();
    let a = signal::average(fs, &v, &[0, 1], settings(seg)).unwrap();
    let e = signal::estimate(
        &a,
        &chans,
        &[0, 1],
        &[2, 3],
        Estimator::H2,
        "h",
        &Provenance::default(),
    )
    .unwrap_err();
    assert!(e.to_string().contains("H1 or Hv"), "{e}");
    // fully correlated inputs: singular, refused naming a frequency
    let same = [x[0].clone(), x[0].clone(), x[2].clone()];
    let v: Vec<&[f64]> = same.iter().map(|c| c.as_slice()).collect();
    let a = signal::average(fs, &v, &[0, 1], settings(seg)).unwrap();
    let e = signal::estimate(
        &a,
        &chans[..3],
        &[0, 1],
        &[2],
        Estimator::H1,
        "h",
        &Provenance::default(),
    )
    .unwrap_err();
    assert!(e.to_string().contains("singular at"), "{e}");
}
