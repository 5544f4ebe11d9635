//! `mortise listen FILE -o OUT.wav`: the sound of a predicted sound-pressure
//! spectrum ([`crate::listen`]), written as a calibrated 32-bit float WAV.

use super::{Args, Done};
use crate::error::{quote, Error, Result};
use crate::io::{self, ImportOptions};
use crate::listen::{float_wav, synthesize, ListenOptions, HEARING_CAUTION};
use std::path::Path;

fn number(args: &Args, name: &str) -> Result<Option<f64>> {
    args.value(name)
        .map(|v| {
            v.trim()
                .parse::<f64>()
                .map_err(|_| Error::usage(format!("--{name} '{}': expected a number", quote(v))))
        })
        .transpose()
}

pub fn run(args: &Args) -> Result<Done> {
    let [path] = args.positional.as_slice() else {
        return Err(Error::usage(
            "listen takes one FILE holding a sound-pressure spectrum (a result of 'mortise run')",
        ));
    };
    let out = args
        .value("o")
        .ok_or_else(|| Error::usage("listen needs -o OUT.wav"))?;
    let limits = super::limits::from_args(args)?;
    let mut opts = ListenOptions::default();
    if let Some(s) = number(args, "seconds")? {
        opts.seconds = s;
    }
    if let Some(r) = number(args, "rate")? {
        if r.fract() != 0.0 || r < 0.0 || r > f64::from(u32::MAX) {
            return Err(Error::usage(format!(
                "--rate {r}: expected a whole number of samples per second"
            )));
        }
        opts.rate = r as u32;
    }
    opts.full_scale_pa = number(args, "full-scale-pa")?;
    let bytes = io::disk::read_file(Path::new(path), path, &limits)?;
    let loaded = io::load_with_limits(
        &bytes,
        &io::base_name(path),
        &ImportOptions::default(),
        &limits,
    )
    .map_err(|e| e.in_file(path.as_str()))?;
    let want = args.value("output");
    let mut found = None;
    for s in &loaded.sets {
        for (i, d) in s.outputs.iter().enumerate() {
            let name_ok = want.map_or(true, |w| w == d.to_string() || w == s.name);
            if name_ok && s.signal.is_some() && s.out_qty == crate::units::Quantity::Pressure {
                found.get_or_insert((s, i));
            }
        }
    }
    let Some((set, row)) = found else {
        return Err(Error::quantity(format!(
            "no sound-pressure spectrum{} in the file; listen needs a predicted pressure spectrum such as a 'respond' result at a microphone",
            want.map(|w| format!(" named '{}'", quote(w))).unwrap_or_default()
        ))
        .in_file(path.as_str()));
    };
    let sound = synthesize(set, row, &opts, &limits).map_err(|e| e.in_file(path.as_str()))?;
    let wav = float_wav(sound.rate, &sound.samples);
    std::fs::write(out, &wav).map_err(|e| Error::io(format!("cannot write '{out}': {e}")))?;
    if args.flag("json") {
        let mut v = serde_json::to_value(&sound).map_err(|e| super::internal(e.to_string()))?;
        v["file"] = out.into();
        v["output"] = set.outputs[row].to_string().into();
        v["caution"] = HEARING_CAUTION.into();
        return Ok(Done::json(v));
    }
    let mut s = format!(
        "wrote {out}: {} s of {} at {} Hz, 32-bit float\n  full scale (sample 1.0) = {:.6e} Pa: set the playback gain so that a full-scale sine plays at {:.1} dB SPL to hear the predicted level\n",
        opts.seconds,
        set.outputs[row],
        sound.rate,
        sound.full_scale_pa,
        sound.full_scale_spl_db
    );
    for n in &sound.notes {
        s.push_str(&format!("  note: {n}\n"));
    }
    s.push_str(&format!("caution: {HEARING_CAUTION}\n"));
    Ok(Done::text(s))
}
