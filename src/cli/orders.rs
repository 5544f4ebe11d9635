//! `mortise orders`: order tracks of a run-up or run-down through
//! [`crate::signal::orders`].

use super::{Args, Done};
use crate::error::{quote, Error, Result};
use crate::frf::{Dof, Provenance};
use crate::io::{self, ExportFormat};
use crate::signal::analyse::{self, ChannelSpec};
use crate::signal::orders::{
    by_speed, order_tracks, parse_profile, OrderSettings, Speed, ORDER_DEFAULTS,
};
use std::io::{BufReader, Read};
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

fn whole(args: &Args, name: &str, default: usize) -> Result<usize> {
    match args.value(name) {
        None => Ok(default),
        Some(v) => v
            .trim()
            .parse::<usize>()
            .map_err(|_| Error::usage(format!("--{name} '{}': expected a whole number", quote(v)))),
    }
}

pub fn run(args: &Args) -> Result<Done> {
    let [path] = args.positional.as_slice() else {
        return Err(Error::usage("orders takes one FILE of time data"));
    };
    let out = args
        .value("o")
        .ok_or_else(|| Error::usage("orders needs -o OUT"))?;
    let fmt = match args.value("to") {
        Some(t) => ExportFormat::parse(t)?,
        None => ExportFormat::from_extension(out).ok_or_else(|| {
            Error::usage(format!(
                "cannot tell the output format from '{out}'; give --to uff, uff-binary or csv"
            ))
        })?,
    };
    if fmt == ExportFormat::Bundle {
        return Err(Error::usage("orders writes uff, uff-binary or csv"));
    }
    let order = number(args, "order")?.ok_or_else(|| Error::usage("orders needs --order O"))?;
    let settings = OrderSettings {
        order,
        revolutions: whole(args, "revolutions", ORDER_DEFAULTS.2)?,
        samples_per_rev: whole(args, "samples-per-rev", ORDER_DEFAULTS.3)?,
    };
    let tach = args
        .value("tach")
        .map(|t| Dof::parse(t, "").map_err(|e| Error::usage(format!("--tach: {}", e.message))))
        .transpose()?;
    let speed_text = args.value("speed");
    match (&tach, speed_text) {
        (Some(_), Some(_)) => {
            return Err(Error::usage("give --speed or --tach, not both"));
        }
        (None, None) => {
            return Err(Error::usage(
                "orders needs the speed: --speed T:RPM,... or --tach DOF",
            ))
        }
        (None, Some(_)) => {
            for o in ["tach-level", "pulses-per-rev"] {
                if args.value(o).is_some() {
                    return Err(Error::usage(format!("--{o} applies to --tach")));
                }
            }
        }
        _ => {}
    }
    let limits = super::limits::from_args(args)?;
    let shown = io::base_name(path);
    let specs: Vec<ChannelSpec> = args
        .values("channel")
        .iter()
        .map(|t| ChannelSpec::parse(t, ""))
        .collect::<Result<_>>()?;
    let mut file = io::disk::open_stream(Path::new(path), path)?;
    let mut head = [0u8; 12];
    let n = file
        .read(&mut head)
        .map_err(|e| Error::io(format!("cannot read: {e}")).in_file(path.as_str()))?;
    drop(file);
    let (rec, notes, prov) = if io::wav::looks_like_wav(&head[..n]) {
        super::time_data::time_map(args, true)?;
        let f = io::disk::open_stream(Path::new(path), path)?;
        let length = f
            .metadata()
            .map_err(|e| Error::io(format!("cannot read: {e}")).in_file(path.as_str()))?
            .len();
        // hashed as the blocks pass (`io::wav::hashing`), then the bytes after the samples
        let (stream, hash) = io::wav::hashing(BufReader::with_capacity(1 << 20, f));
        let wav = io::wav::WavReader::with_length(stream, path, length)?;
        let (rec, _, notes) = analyse::wav_recording(wav, path, &specs, &limits)?;
        let mut rest = io::disk::open_stream(Path::new(path), path)?;
        std::io::copy(&mut (&mut rest).take(hash.len()), &mut std::io::sink())
            .map_err(|e| Error::io(format!("cannot read: {e}")).in_file(path.as_str()))?;
        let prov = Provenance {
            file: shown.clone(),
            sha256: hash.finish(rest, path)?,
            format: "wav".into(),
            options: String::new(),
        };
        (rec, notes, prov)
    } else {
        let map = super::time_data::time_map(args, false)?;
        let (rec, prov, notes) =
            super::time_data::recording_of(path, &shown, &specs, map.as_ref(), &limits)?;
        (rec, notes, prov)
    };
    let (speed, tach_index) = match (&tach, speed_text) {
        (Some(d), _) => {
            let i = rec.index_of(d).map_err(|e| e.field("tach"))?;
            (
                Speed::Tach {
                    samples: rec.samples[i].clone(),
                    level: number(args, "tach-level")?.unwrap_or(ORDER_DEFAULTS.0),
                    pulses_per_rev: number(args, "pulses-per-rev")?.unwrap_or(ORDER_DEFAULTS.1),
                },
                Some(i),
            )
        }
        (None, Some(t)) => (
            Speed::Profile(
                parse_profile(t).map_err(|e| Error::usage(format!("--speed: {}", e.message)))?,
            ),
            None,
        ),
        (None, None) => return Err(Error::internal("speed checked above")),
    };
    let name = format!("{} order {order}", io::file_stem(path));
    let sets =
        order_tracks(&rec, &speed, tach_index, &settings, &name, &prov, &limits).map_err(|e| {
            if e.file.is_none() {
                e.in_file(path.as_str())
            } else {
                e
            }
        })?;
    let by_speed = number(args, "by-speed")?
        .map(|step| {
            by_speed(&sets, order, step, crate::signal::orders::MAX_BY_SPEED_ROWS)
                .map_err(|e| Error::usage(format!("--by-speed: {}", e.message)))
        })
        .transpose()?;
    let exported = io::export(&sets, fmt)?;
    std::fs::write(out, &exported.bytes)
        .map_err(|e| Error::io(format!("cannot write '{out}': {e}")))?;
    let table_file = match &by_speed {
        Some(t) => {
            let stem = Path::new(out).with_extension("");
            let file = format!("{}.by-speed.json", stem.display());
            // one entry a line, ready to paste into a speed sweep's "orders"
            let lines = t
                .iter()
                .map(serde_json::to_string)
                .collect::<std::result::Result<Vec<_>, _>>()
                .map_err(|e| super::internal(e.to_string()))?;
            std::fs::write(&file, format!("[\n{}\n]\n", lines.join(",\n")))
                .map_err(|e| Error::io(format!("cannot write '{file}': {e}")))?;
            Some(file)
        }
        None => None,
    };
    let what = sets[0]
        .provenance
        .first()
        .map(|p| p.options.clone())
        .unwrap_or_default();
    if args.flag("json") {
        return Ok(Done::json(serde_json::json!({
            "file": out,
            "sets": sets.iter().map(|s| serde_json::json!({
                "name": s.name,
                "outputs": s.outputs.iter().map(|d| d.to_string()).collect::<Vec<_>>(),
                "lines": s.n_lines(),
                "from_hz": s.freqs.first(),
                "to_hz": s.freqs.last(),
            })).collect::<Vec<_>>(),
            "tracking": what,
            "by_speed_file": table_file,
            "notes": notes,
        })));
    }
    let mut s = format!("wrote {out}: {} set(s), {what}\n", sets.len());
    if let (Some(file), Some(t)) = (&table_file, &by_speed) {
        s.push_str(&format!(
            "wrote {file}: {} table(s) of {} speed(s) for a speed sweep's orders\n",
            t.len(),
            t.first().map_or(0, |x| x.by_speed.len())
        ));
    }
    for n in &notes {
        s.push_str(&format!("  note: {n}\n"));
    }
    Ok(Done::text(s))
}
