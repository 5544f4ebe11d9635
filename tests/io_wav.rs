//! WAV reading against files written by Python's wave module,
//! scipy.io.wavfile and a hand-made WAVE_FORMAT_EXTENSIBLE layout
//! (tests/py/wav_write.py), block by block; and bad headers refused with
//! the byte offset of the field.

mod common;

use mortise::error::Location;
use mortise::io::wav::WavReader;
use std::io::Cursor;

#[test]
fn samples_equal_what_python_wrote() {
    let dir = common::scratch("io_wav");
    let out = common::run_py("wav_write.py", &[dir.to_str().unwrap()]);
    let files: serde_json::Value = serde_json::from_str(&out).unwrap();
    let files = files.as_array().unwrap();
    assert_eq!(files.len(), 11);
    for f in files {
        let name = f["name"].as_str().unwrap();
        let bytes = std::fs::read(dir.join(name)).unwrap();
        let want: Vec<Vec<f64>> = f["samples"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| {
                c.as_array()
                    .unwrap()
                    .iter()
                    .map(|v| v.as_f64().unwrap())
                    .collect()
            })
            .collect();
        let mut r = WavReader::new(Cursor::new(bytes.clone()), name).unwrap();
        assert_eq!(
            r.info.sample_rate as u64,
            f["rate"].as_u64().unwrap(),
            "{name}"
        );
        assert_eq!(r.info.channels, want.len(), "{name}");
        assert_eq!(r.info.extensible, name.starts_with("ext_"), "{name}");
        // every sample exactly (PCM / 2^(bits-1) and float widening are exact)
        assert_eq!(r.read_all().unwrap(), want, "{name}");
        // in blocks of 7 frames: the same
        let mut r = WavReader::new(Cursor::new(bytes), name).unwrap();
        let mut got: Vec<Vec<f64>> = vec![Vec::new(); want.len()];
        loop {
            let b = r.read_frames(7).unwrap();
            if b.is_empty() {
                break;
            }
            for (c, v) in got.iter_mut().enumerate() {
                v.extend(b.iter().skip(c).step_by(want.len()));
            }
        }
        assert_eq!(got, want, "{name} in blocks");
    }
}

/// A 2-channel 16-bit PCM file of 4 frames, in the canonical 44-byte layout
/// (fmt chunk at byte 12, its body at 20; data at 44).
fn pcm16() -> Vec<u8> {
    let mut b = Vec::new();
    b.extend_from_slice(b"RIFF");
    b.extend_from_slice(&(36u32 + 16).to_le_bytes());
    b.extend_from_slice(b"WAVEfmt ");
    b.extend_from_slice(&16u32.to_le_bytes());
    for v in [1u16, 2] {
        b.extend_from_slice(&v.to_le_bytes());
    }
    b.extend_from_slice(&8000u32.to_le_bytes());
    b.extend_from_slice(&32000u32.to_le_bytes());
    for v in [4u16, 16] {
        b.extend_from_slice(&v.to_le_bytes());
    }
    b.extend_from_slice(b"data");
    b.extend_from_slice(&16u32.to_le_bytes());
    for v in [0i16, 16384, -16384, 32767, 1, -1, 100, -32768] {
        b.extend_from_slice(&v.to_le_bytes());
    }
    b
}

/// A named change of the canonical file, the byte its error must name and a
/// text it must contain.
type Case = (&'static str, Box<dyn Fn(&mut Vec<u8>)>, usize, &'static str);

fn refused(bytes: Vec<u8>) -> mortise::error::Error {
    match WavReader::new(Cursor::new(bytes), "bad.wav") {
        Err(e) => e,
        Ok(mut r) => r.read_all().unwrap_err(),
    }
}

#[test]
fn bad_headers_are_refused_at_their_byte() {
    // the canonical file reads (WAVE layout: Microsoft/IBM RIFF specification, 1991)
    let mut r = WavReader::new(Cursor::new(pcm16()), "ok.wav").unwrap();
    assert_eq!(
        r.read_all().unwrap(),
        vec![
            vec![0.0, -0.5, 1.0 / 32768.0, 100.0 / 32768.0],
            vec![0.5, 32767.0 / 32768.0, -1.0 / 32768.0, -1.0]
        ]
    );
    let cases: Vec<Case> = vec![
        ("fmt size 12", Box::new(|b| b[16] = 12), 16, "expected 16"),
        ("0 channels", Box::new(|b| b[22] = 0), 22, "0 channels"),
        (
            "rate 0",
            Box::new(|b| b[24..28].copy_from_slice(&[0; 4])),
            24,
            "sample rate 0",
        ),
        ("block align", Box::new(|b| b[32] = 3), 32, "block align 3"),
        ("20 bits", Box::new(|b| b[34] = 20), 34, "20 bits"),
        ("compressed", Box::new(|b| b[20] = 2), 20, "format tag 2"),
        (
            "truncated",
            Box::new(|b| b.truncate(50)),
            50,
            "file ends at byte 50",
        ),
        ("not riff", Box::new(|b| b[0] = b'X'), 0, "not a WAV file"),
        (
            "half frame",
            Box::new(|b| b[40] = 15),
            40,
            "not whole frames",
        ),
    ];
    for (what, change, byte, text) in cases {
        let mut b = pcm16();
        change(&mut b);
        let e = refused(b);
        assert_eq!(e.file.as_deref(), Some("bad.wav"), "{what}");
        assert_eq!(e.location, Some(Location::Byte(byte)), "{what}: {e}");
        assert!(e.to_string().contains(text), "{what}: {e}");
    }
}

#[test]
fn frf_readers_send_time_data_to_the_time_commands() {
    // a WAV file or a time CSV given where FRFs are read (inspect, convert,
    // a recipe component, the page) is named as time data, with the way on
    let e = mortise::io::detect(&pcm16(), "rec.wav").unwrap_err();
    assert!(
        e.message
            .contains("WAV recording (2 channel(s), 8000 Hz, 16-bit PCM, 4 frames")
            && e.message.contains("mortise spectrum"),
        "{e}"
    );
    let e = mortise::io::detect(b"time [s], a:1+Z [N]\n0, 1\n0.1, 2\n", "rec.csv").unwrap_err();
    assert!(
        e.message.contains("time data") && e.message.contains("'mortise estimate'"),
        "{e}"
    );
}

/// RF64 (EBU Tech 3306) written by hand in Python (tests/py/rf64_write.py):
/// the same samples as Python's wave module's plain WAV, PCM and float; a
/// ds64 RIFF size or data size that disagrees with the file is refused at
/// its byte (20 and 28); `mortise spectrum` gives the same spectra from the
/// RF64 file as from the plain one.
#[test]
fn rf64_reads_as_the_plain_wav_and_refuses_a_ds64_that_disagrees() {
    let dir = common::scratch("io_wav_rf64");
    let d = dir.to_str().unwrap();
    let r: serde_json::Value =
        serde_json::from_str(&common::run_py("rf64_write.py", &[d])).unwrap();
    let read = |name: &str| {
        let bytes = std::fs::read(dir.join(name)).unwrap();
        let len = bytes.len() as u64;
        WavReader::with_length(std::io::Cursor::new(bytes), name, len)
    };
    let mut plain = read("plain.wav").unwrap();
    let mut rf = read("same.rf64.wav").unwrap();
    assert!(rf.info.ds64.is_some());
    assert_eq!(rf.info.frames, plain.info.frames);
    let a = plain.read_all().unwrap();
    let b = rf.read_all().unwrap();
    assert_eq!(a, b);
    for (c, col) in b.iter().enumerate() {
        let want: Vec<f64> = r["pcm"][c]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap() / 32768.0)
            .collect();
        assert_eq!(col, &want, "channel {c}");
    }
    let mut f = read("float.rf64.wav").unwrap();
    let got = f.read_all().unwrap();
    for (c, col) in got.iter().enumerate() {
        let want: Vec<f64> = r["float"][c]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        assert_eq!(col, &want, "float channel {c}");
    }
    for (name, at, field) in [
        (
            "bad_riff.rf64.wav",
            r["riff_size_at"].as_u64().unwrap(),
            "ds64 RIFF size",
        ),
        (
            "bad_data.rf64.wav",
            r["data_size_at"].as_u64().unwrap(),
            "ds64 data size",
        ),
    ] {
        let e = read(name).err().expect("refused");
        assert_eq!(
            e.location,
            Some(mortise::error::Location::Byte(at as usize)),
            "{name}: {e}"
        );
        assert_eq!(e.field.as_deref(), Some(field), "{name}: {e}");
    }
    // the command line streams it as the plain file
    let spectrum = |name: &str, out: &str| {
        let argv: Vec<String> = [
            "spectrum",
            dir.join(name).to_str().unwrap(),
            "-o",
            dir.join(out).to_str().unwrap(),
            "--channel",
            "1=rig:1+Z force 100 N",
            "--channel",
            "2=rig:2+Z acceleration 50 m/s^2",
            "--segment",
            "512",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        mortise::cli::run_cli(&argv).unwrap();
        mortise::io::load(
            &std::fs::read(dir.join(out)).unwrap(),
            out,
            &mortise::io::ImportOptions::default(),
        )
        .unwrap()
        .sets
    };
    let p = spectrum("plain.wav", "plain.csv");
    let q = spectrum("same.rf64.wav", "rf64.csv");
    assert_eq!(p.len(), q.len());
    for (x, y) in p.iter().zip(&q) {
        assert_eq!(x.data, y.data);
    }
    let argv: Vec<String> = [
        "spectrum",
        dir.join("bad_data.rf64.wav").to_str().unwrap(),
        "-o",
        dir.join("bad.csv").to_str().unwrap(),
        "--channel",
        "1=rig:1+Z force 100 N",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    let e = mortise::cli::run_cli(&argv).unwrap_err();
    assert_eq!(e.location, Some(mortise::error::Location::Byte(28)), "{e}");
}
