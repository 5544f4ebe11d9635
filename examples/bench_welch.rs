//! Speed benchmark of Welch averaging: mortise streaming a WAV file against
//! scipy.signal.welch, in the same run (issue: 8 channels × 10 minutes at
//! 51.2 kHz).
//!
//! tests/py/bench_welch.py writes the recording (32-bit float, seeded noise
//! and a tone per channel; about 983 MB for 10 minutes) unless it exists;
//! mortise reads it in blocks through `signal::analyse::analyse_wav` (every
//! channel, Hann, segment 8192, overlap 0.5, detrend constant, PSD) and is
//! timed from opening the file to the spectra, reading and conversion
//! included; then scipy's welch is timed on each channel's float64 samples
//! (the time of the welch calls alone: reading and conversion are left out
//! of scipy's time, which favours scipy). Prints both times, their ratio,
//! this process's peak resident memory (VmHWM) after mortise's part, and the
//! largest difference between the two PSDs relative to each channel's
//! largest value.
//!
//! Run: `cargo run --profile bench-native --example bench_welch [MINUTES]`
//! (default 10; Python: $MORTISE_PYTHON, else .venv/bin/python). The file is
//! kept in target/bench-welch/ for further runs.

use mortise::frf::{Provenance, SignalKind};
use mortise::limits::Limits;
use mortise::signal::analyse::{analyse_wav, Averaging, ChannelSpec, Job};
use mortise::signal::{Detrend, Window};
use std::path::PathBuf;
use std::process::Command;
use std::time::Instant;

const SEGMENT: usize = 8192;

fn python() -> PathBuf {
    std::env::var("MORTISE_PYTHON")
        .map(PathBuf::from)
        .unwrap_or_else(|_| PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(".venv/bin/python"))
}

fn py(args: &[&str]) -> String {
    let script = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/py/bench_welch.py");
    let out = Command::new(python())
        .arg(script)
        .args(args)
        .output()
        .expect("cannot start Python");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

fn peak_rss_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1))
                .and_then(|v| v.parse::<f64>().ok())
        })
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

fn main() {
    let minutes: f64 = std::env::args()
        .nth(1)
        .map(|m| m.parse().expect("MINUTES: a number"))
        .unwrap_or(10.0);
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-welch");
    std::fs::create_dir_all(&dir).unwrap();
    let wav = dir.join(format!("rec-{minutes}min.wav"));
    let w = wav.to_str().unwrap().to_string();
    if !wav.exists() {
        println!("writing {w} ...");
        py(&["write", &w, &minutes.to_string()]);
    }
    let specs: Vec<ChannelSpec> = (1..=8)
        .map(|c| ChannelSpec::parse(&format!("{c}=bench:{c}+Z acceleration 1 m/s^2"), "").unwrap())
        .collect();
    let avg = Averaging {
        segment: SEGMENT,
        overlap: 0.5,
        window: Window::Hann,
        detrend: Detrend::Constant,
    };
    let job = Job::Spectrum {
        kind: SignalKind::Psd,
        reference: None,
    };
    let t = Instant::now();
    let file = std::fs::File::open(&wav).unwrap();
    let reader =
        mortise::io::wav::WavReader::new(std::io::BufReader::with_capacity(1 << 20, file), &w)
            .unwrap();
    let a = analyse_wav(
        reader,
        &w,
        &specs,
        &avg,
        &job,
        "bench",
        &Provenance::default(),
        &Limits::default(),
        &mut |_, _| {},
    )
    .unwrap();
    let rust = t.elapsed().as_secs_f64();
    let rss = peak_rss_mb();
    let out = dir.join("scipy-psd.bin");
    let said = py(&["welch", &w, &SEGMENT.to_string(), out.to_str().unwrap()]);
    let v: serde_json::Value = serde_json::from_str(&said).unwrap();
    let scipy = v["seconds"].as_f64().unwrap();
    let bytes = std::fs::read(&out).unwrap();
    let sp: Vec<f64> = bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect();
    let set = &a.sets[0];
    let lines = set.n_lines();
    let mut worst = 0.0f64;
    for c in 0..8 {
        let theirs = &sp[c * lines..(c + 1) * lines];
        let scale = theirs.iter().fold(0.0f64, |m, v| m.max(*v));
        for (k, t) in theirs.iter().enumerate() {
            worst = worst.max((set.get(k, c, 0).re - t).abs() / scale);
        }
    }
    println!(
        "Welch PSD, 8 channels × {minutes} min at 51.2 kHz ({} samples each, {} segments of {SEGMENT}, Hann, 50 % overlap)",
        a.samples, a.segments
    );
    println!(
        "  mortise (streaming the WAV, reading included): {rust:.2} s, peak memory {rss:.0} MB"
    );
    println!(
        "  scipy.signal.welch (float64 samples in memory, welch calls only): {scipy:.2} s (+{:.2} s converting)",
        v["read_seconds"].as_f64().unwrap()
    );
    println!("  ratio scipy / mortise: {:.2}", scipy / rust);
    println!("  largest PSD difference, relative to each channel's largest value: {worst:.2e}");
}
