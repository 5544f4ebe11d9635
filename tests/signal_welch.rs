//! Welch spectra, cross spectra and coherence against scipy.signal
//! (tests/py/signal_welch.py), Parseval, and a sine read back through the
//! flat-top window.

mod common;

use mortise::frf::{Dof, Provenance, SignalKind};
use mortise::signal::{self, frf_estimate, Channel, Detrend, WelchSettings, Window};
use mortise::units::Quantity;

fn read_bin(path: &std::path::Path, n: usize) -> Vec<Vec<f64>> {
    let bytes = std::fs::read(path).unwrap();
    let v: Vec<f64> = bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect();
    v.chunks(n).map(|c| c.to_vec()).collect()
}

fn arr(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

/// Largest |a − b| over the largest |b|: relative to the spectrum's scale,
/// so lines where scipy's value is near zero (0 Hz after detrending) count
/// by their absolute error.
fn rel_err(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    let scale = b.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    a.iter()
        .zip(b)
        .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()))
        / scale
}

fn channels(n: usize) -> Vec<Channel> {
    (0..n)
        .map(|i| Channel {
            dof: Dof::parse(&format!("rig:{}+Z", i + 1), "").unwrap(),
            quantity: Quantity::Acceleration,
        })
        .collect()
}

#[test]
fn welch_csd_and_coherence_equal_scipy() {
    let dir = common::scratch("signal_welch");
    let out = common::run_py("signal_welch.py", &[dir.to_str().unwrap()]);
    let r: serde_json::Value = serde_json::from_str(&out).unwrap();
    let fs = r["fs"].as_f64().unwrap();
    let n = r["n"].as_u64().unwrap() as usize;
    let x = read_bin(&dir.join("x.bin"), n);
    let refs: Vec<&[f64]> = x.iter().map(|c| c.as_slice()).collect();
    let chans = channels(3);
    let mut worst = 0.0f64;
    for case in r["cases"].as_array().unwrap() {
        let s = WelchSettings {
            segment: case["segment"].as_u64().unwrap() as usize,
            overlap: case["overlap"].as_u64().unwrap() as usize,
            window: Window::parse(case["window"].as_str().unwrap()).unwrap(),
            detrend: Detrend::parse(case["detrend"].as_str().unwrap()).unwrap(),
        };
        let what = format!("{s:?}");
        let a = signal::average(fs, &refs, &[0], s).unwrap();
        assert!(rel_err(&a.freqs, &arr(&case["freqs"])) <= 1e-15, "{what}");
        let prov = Provenance::default();
        let psd = signal::spectrum_sets(&a, &chans, SignalKind::Psd, None, "p", &prov).unwrap();
        let ap =
            signal::spectrum_sets(&a, &chans, SignalKind::Autopower, None, "a", &prov).unwrap();
        let cs = signal::spectrum_sets(&a, &chans, SignalKind::Cross, Some(0), "c", &prov).unwrap();
        assert_eq!(psd.len(), 1);
        assert_eq!(cs[0].inputs[0], chans[0].dof);
        for c in 0..3 {
            let col = |set: &mortise::frf::FrfSet| -> (Vec<f64>, Vec<f64>) {
                set.column(c, 0).iter().map(|v| (v.re, v.im)).unzip()
            };
            // scipy.signal.welch, scaling 'spectrum' and 'density': ≤ 1e-10
            let e = rel_err(&col(&ap[0]).0, &arr(&case["spectrum"][c]));
            worst = worst.max(e);
            assert!(e <= 1e-10, "{what} autopower channel {c}: {e:e}");
            let e = rel_err(&col(&psd[0]).0, &arr(&case["density"][c]));
            worst = worst.max(e);
            assert!(e <= 1e-10, "{what} PSD channel {c}: {e:e}");
            // scipy.signal.csd(x0, xc, scaling='spectrum'): conj(X0)·Xc
            let (re, im) = col(&cs[0]);
            let sre = arr(&case["cross_re"][c]);
            let sim = arr(&case["cross_im"][c]);
            let scale = sre.iter().chain(&sim).fold(0.0f64, |m, v| m.max(v.abs()));
            let e = re
                .iter()
                .zip(&sre)
                .chain(im.iter().zip(&sim))
                .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()))
                / scale;
            worst = worst.max(e);
            assert!(e <= 1e-10, "{what} cross channel {c}: {e:e}");
        }
        // scipy.signal.coherence(x0, x1), lines above 0 Hz
        let coh = frf_estimate::ordinary_coherence(&a, &[0], &[1]).unwrap();
        let sc = arr(&case["coherence"]);
        let e = rel_err(&coh, &sc[1..]);
        worst = worst.max(e);
        assert!(e <= 1e-10, "{what} coherence: {e:e}");
        assert!(coh.iter().all(|&g| (0.0..=1.0 + 1e-12).contains(&g)));
    }
    println!("largest difference to scipy, relative to each spectrum's largest value: {worst:e}");
}

#[test]
fn psd_integrates_to_the_mean_square() {
    // Parseval's theorem for the DFT (any DSP text; common practice): with
    // a rectangular window, no detrending and segments tiling the record,
    // Σ PSD·Δf is the record's mean square. With another window it is the
    // window-weighted mean square Σ(w x)² / Σ w² of the segments.
    let fs = 1000.0;
    let mut state = 0x2545f4914f6cdd1du64;
    let x: Vec<f64> = (0..64 * 250)
        .map(|i| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5 + (i as f64 * 0.01).sin()
        })
        .collect();
    let ms = x.iter().map(|v| v * v).sum::<f64>() / x.len() as f64;
    let s = WelchSettings {
        segment: 250,
        overlap: 0,
        window: Window::Rectangular,
        detrend: Detrend::None,
    };
    let a = signal::average(fs, &[&x], &[], s).unwrap();
    let psd = signal::spectrum_sets(
        &a,
        &channels(1),
        SignalKind::Psd,
        None,
        "p",
        &Provenance::default(),
    )
    .unwrap();
    let integral: f64 = psd[0].column(0, 0).iter().map(|v| v.re).sum::<f64>() * a.df();
    let e = (integral - ms).abs() / ms;
    println!("Parseval: Σ PSD·Δf = {integral}, mean square {ms}, relative {e:e}");
    assert!(e <= 1e-12, "{e:e}");

    // Hann, one segment: the window-weighted mean square
    let s = WelchSettings {
        segment: x.len(),
        window: Window::Hann,
        ..s
    };
    let a = signal::average(fs, &[&x], &[], s).unwrap();
    let w = Window::Hann.coefficients(x.len(), fs).unwrap();
    let wms = x.iter().zip(&w).map(|(v, w)| (v * w).powi(2)).sum::<f64>()
        / w.iter().map(|w| w * w).sum::<f64>();
    let integral: f64 = a.autos.iter().sum::<f64>() / a.enbw_hz() * a.df();
    assert!((integral - wms).abs() <= 1e-12 * wms);
}

#[test]
fn flat_top_reads_a_sine_amplitude_within_a_hundredth_of_a_decibel() {
    // a sine of amplitude A anywhere between two lines: the flat-top
    // window's scalloping loss stays below 0.01 dB (its purpose; D'Antona
    // and Ferrero 2006 p. 70), so the peak linear spectrum's largest line
    // reads A. Off-bin offsets 0, 0.25 and 0.5 lines.
    let fs = 4096.0;
    let seg = 4096;
    let amp = 3.7;
    for offset in [0.0, 0.25, 0.5] {
        let f0 = (400.0 + offset) * fs / seg as f64;
        let x: Vec<f64> = (0..seg * 8)
            .map(|i| amp * (2.0 * std::f64::consts::PI * f0 * i as f64 / fs + 0.3).cos())
            .collect();
        let s = WelchSettings {
            segment: seg,
            overlap: seg / 2,
            window: Window::FlatTop,
            detrend: Detrend::Constant,
        };
        let a = signal::average(fs, &[&x], &[0], s).unwrap();
        let peak = signal::spectrum_sets(
            &a,
            &channels(1),
            SignalKind::Peak,
            Some(0),
            "p",
            &Provenance::default(),
        )
        .unwrap();
        let max = peak[0]
            .column(0, 0)
            .iter()
            .map(|v| v.norm())
            .fold(0.0, f64::max);
        let db = 20.0 * (max / amp).log10();
        println!("flat-top, sine {offset} lines off a line: {db:+.5} dB");
        assert!(db.abs() < 0.01, "{offset}: {db} dB");
        // the RMS spectrum reads A/√2
        let rms = signal::spectrum_sets(
            &a,
            &channels(1),
            SignalKind::Rms,
            Some(0),
            "r",
            &Provenance::default(),
        )
        .unwrap();
        let rmax = rms[0]
            .column(0, 0)
            .iter()
            .map(|v| v.norm())
            .fold(0.0, f64::max);
        assert!((rmax * 2f64.sqrt() - max).abs() < 1e-12 * max);
    }
    // a linear spectrum without a reference is refused, not given a phase
    let x = vec![1.0; 64];
    let a = signal::average(
        64.0,
        &[&x],
        &[],
        WelchSettings {
            segment: 16,
            overlap: 0,
            window: Window::Hann,
            detrend: Detrend::None,
        },
    )
    .unwrap();
    let e = signal::spectrum_sets(
        &a,
        &channels(1),
        SignalKind::Peak,
        None,
        "p",
        &Provenance::default(),
    )
    .unwrap_err();
    assert!(e.to_string().contains("reference"), "{e}");
}
