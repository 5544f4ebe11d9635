//! A sweep split over several workers that share no memory (the page's web
//! workers): the inputs the sweep reads gathered once and written as bytes
//! each worker loads into its own workspace, a contiguous slice of the
//! points computed on them by the function `mortise sweep --shard K/N`
//! calls ([`super::sweep::sweep_on`] with [`super::sweep::slice`]), and the
//! slices folded by [`super::sweep::merge_reports`] (the slice rule of
//! `mortise merge`). Every point is computed alone on bit-identical
//! inputs, so the merged sweep equals the one computed in one piece,
//! whatever the number of workers.
//!
//! # The inputs' bytes
//! ```text
//! mortise-sweep-inputs 1\n
//! STR  the SHA-256 of the recipe text they were gathered for (hex)
//! U64  number of components, then each: STR name, U64 length, the set's
//!      canonical bytes (crate::io::bundle::set_canonical_bytes)
//! U64  number of files the steps read, then each: STR name, U64 length, bytes
//! STR  the SHA-256 (hex) of every byte before this field
//! ```
//! U64 is 8 bytes little-endian, STR a U64 length and UTF-8 bytes. Reading
//! checks the final hash and that every set written again gives the same
//! canonical bytes (so the copy is bit for bit the gathered sets, NaN
//! payloads aside).

use super::execute::{execute_on, load_components_with};
use super::sweep::{merge_reports, slice, sweep_on, SweepReport};
use super::uncertainty::component_uncertainties;
use super::{FileSource, MapSource};
use crate::error::{quote, Error, Result};
use crate::frf::FrfSet;
use crate::io::bundle::{set_canonical_bytes, set_from_canonical_bytes};
use crate::io::sha256_hex;
use crate::limits::Limits;
use std::collections::BTreeMap;
use std::sync::Mutex;

/// The first bytes of a sweep's inputs.
pub const SWEEP_INPUTS_MAGIC: &[u8] = b"mortise-sweep-inputs 1\n";
/// The most workers a sweep may be split over.
pub const MAX_WORKERS: usize = 8;

/// What every point of a recipe's sweep reads: the components as loaded
/// (synthesized, resampled, selected) and the files its steps read.
#[derive(Debug, Clone)]
pub struct SweepInputs {
    /// The SHA-256 (hex) of the recipe text they were gathered for.
    pub recipe_sha256: String,
    pub components: BTreeMap<String, FrfSet>,
    /// The files the steps read (recordings, geometry), by the name asked.
    pub files: MapSource,
}

/// A file source that keeps a copy of every file read through it.
struct Recording<'a> {
    inner: &'a dyn FileSource,
    seen: Mutex<BTreeMap<String, Vec<u8>>>,
}

impl FileSource for Recording<'_> {
    fn read(&self, name: &str) -> Result<Vec<u8>> {
        let b = self.inner.read(name)?;
        if let Ok(mut m) = self.seen.lock() {
            m.insert(name.to_string(), b.clone());
        }
        Ok(b)
    }
}

fn put_u64(out: &mut Vec<u8>, n: usize) {
    out.extend_from_slice(&(n as u64).to_le_bytes());
}

fn put_str(out: &mut Vec<u8>, s: &str) {
    put_u64(out, s.len());
    out.extend_from_slice(s.as_bytes());
}

/// The number of workers as the page's option gives it: a whole number
/// from 1 to [`MAX_WORKERS`], else refused naming the option.
pub fn workers(text: &str) -> Result<usize> {
    text.trim()
        .parse::<usize>()
        .ok()
        .filter(|n| (1..=MAX_WORKERS).contains(n))
        .ok_or_else(|| {
            Error::usage(format!(
                "workers '{}': expected a whole number from 1 to {MAX_WORKERS} (1 computes the sweep in the one worker)",
                quote(text)
            ))
            .field("workers")
        })
}

/// Fold the slices' outcomes, in slice order: the first error wins (as a
/// sweep computed in one piece meets it first), else the merged sweep.
pub fn fold_slices(slices: Vec<Result<SweepReport>>) -> Result<SweepReport> {
    let ok = slices.into_iter().collect::<Result<Vec<_>>>()?;
    merge_reports(ok)
}

/// How a sweep was split, in words for the run history: "sweep 'NAME':
/// 200 points on 2 workers (points 0..100, 100..200)".
pub fn split_note(slices: &[(usize, usize)], name: &str, total: usize) -> String {
    let parts: Vec<String> = slices.iter().map(|(a, b)| format!("{a}..{b}")).collect();
    let n = slices.len();
    format!(
        "sweep '{name}': {total} points on {n} worker{} (points {})",
        if n == 1 { "" } else { "s" },
        parts.join(", ")
    )
}

impl SweepInputs {
    /// Gather what the sweep of `recipe_text` reads through `files`: the
    /// components loaded within `limits`, and the files its steps read
    /// (found by running the baseline steps once).
    pub fn gather(recipe_text: &str, files: &dyn FileSource, limits: &Limits) -> Result<Self> {
        let recipe = super::parse(recipe_text)?;
        super::check_names(&recipe)?;
        if recipe.sweep.is_none() {
            return Err(Error::recipe("the recipe has no \"sweep\" section").field("sweep"));
        }
        let components = load_components_with(&recipe, files, limits)?;
        let rec = Recording {
            inner: files,
            seen: Mutex::new(BTreeMap::new()),
        };
        let (unc, _) = component_uncertainties(&recipe, &components)?;
        execute_on(&recipe, &components, &unc, None, limits, &rec)?;
        let seen = rec
            .seen
            .into_inner()
            .map_err(|_| Error::internal("the record of the files read was lost"))?;
        Ok(SweepInputs {
            recipe_sha256: sha256_hex(recipe_text.as_bytes()),
            components,
            files: MapSource(seen),
        })
    }

    /// The bytes of these inputs ([module docs](self)).
    pub fn to_bytes(&self) -> Vec<u8> {
        let mut out = SWEEP_INPUTS_MAGIC.to_vec();
        put_str(&mut out, &self.recipe_sha256);
        put_u64(&mut out, self.components.len());
        for (name, set) in &self.components {
            put_str(&mut out, name);
            let b = set_canonical_bytes(set);
            put_u64(&mut out, b.len());
            out.extend_from_slice(&b);
        }
        put_u64(&mut out, self.files.0.len());
        for (name, b) in &self.files.0 {
            put_str(&mut out, name);
            put_u64(&mut out, b.len());
            out.extend_from_slice(b);
        }
        let hash = sha256_hex(&out);
        put_str(&mut out, &hash);
        out
    }

    /// Read inputs written by [`SweepInputs::to_bytes`]: the final hash
    /// checked, and every set checked to give back its canonical bytes.
    pub fn from_bytes(bytes: &[u8]) -> Result<Self> {
        let what = "the sweep's inputs";
        let bad = |at: usize, msg: String| Error::parse(format!("{what}: {msg}")).at_byte(at);
        if !bytes.starts_with(SWEEP_INPUTS_MAGIC) {
            return Err(bad(0, "they do not begin 'mortise-sweep-inputs 1'".into()));
        }
        // the hash: 8 bytes of length (64) and 64 hex digits at the end
        let body_end = bytes
            .len()
            .checked_sub(72)
            .filter(|&e| e >= SWEEP_INPUTS_MAGIC.len())
            .ok_or_else(|| bad(bytes.len(), "they end before their hash".into()))?;
        let want = std::str::from_utf8(&bytes[body_end + 8..]).unwrap_or("");
        let got = sha256_hex(&bytes[..body_end]);
        if bytes[body_end..body_end + 8] != 64u64.to_le_bytes() || want != got {
            return Err(bad(
                body_end,
                format!(
                    "their SHA-256 is {got}, not the {} they record: the copy is not the bytes written",
                    quote(want)
                ),
            ));
        }
        let mut r = Reader {
            body: &bytes[..body_end],
            at: SWEEP_INPUTS_MAGIC.len(),
        };
        let recipe_sha256 = r.text()?;
        let mut components = BTreeMap::new();
        for _ in 0..r.count()? {
            let name = r.text()?;
            let a = r.at + 8;
            let raw = r.bytes()?;
            let mut k = 0;
            let set = set_from_canonical_bytes(raw, &mut k, what).map_err(|mut e| {
                e.location = None;
                e.at_byte(a + k)
            })?;
            if k != raw.len() || set_canonical_bytes(&set) != raw {
                return Err(bad(
                    a,
                    format!(
                        "component '{}' does not read back to the set written",
                        quote(&name)
                    ),
                ));
            }
            components.insert(name, set);
        }
        let mut files = BTreeMap::new();
        for _ in 0..r.count()? {
            let name = r.text()?;
            files.insert(name, r.bytes()?.to_vec());
        }
        if r.at != r.body.len() {
            return Err(bad(r.at, "bytes after the last file".into()));
        }
        Ok(SweepInputs {
            recipe_sha256,
            components,
            files: MapSource(files),
        })
    }

    /// Slice `k` of `n` of the sweep of `recipe_text` (the text these
    /// inputs were gathered for, refused otherwise), computed on these
    /// inputs on one thread.
    pub fn slice(
        &self,
        recipe_text: &str,
        k: usize,
        n: usize,
        limits: &Limits,
    ) -> Result<SweepReport> {
        let sha = sha256_hex(recipe_text.as_bytes());
        if sha != self.recipe_sha256 {
            return Err(Error::usage(format!(
                "the sweep's inputs were gathered for another recipe text (SHA-256 {}, this one {sha}); gather them again",
                self.recipe_sha256
            ))
            .field("recipe"));
        }
        let recipe = super::parse(recipe_text)?;
        let spec = recipe
            .sweep
            .as_ref()
            .ok_or_else(|| Error::recipe("the recipe has no \"sweep\" section").field("sweep"))?;
        let total = spec.points(&recipe).map_err(|e| e.within("sweep"))?.len();
        let range = slice(total, k, n)?;
        sweep_on(
            &recipe,
            &self.components,
            &self.files,
            limits,
            Some(range),
            1,
        )
    }
}

/// A reader of the inputs' fields.
struct Reader<'a> {
    body: &'a [u8],
    at: usize,
}

impl<'a> Reader<'a> {
    fn bad(&self, msg: &str) -> Error {
        Error::parse(format!("the sweep's inputs: {msg}")).at_byte(self.at)
    }
    /// A U64 count or length, at most the bytes left after it.
    fn count(&mut self) -> Result<usize> {
        let b = self
            .body
            .get(self.at..self.at + 8)
            .ok_or_else(|| self.bad("8 more bytes expected; the data end"))?;
        let mut a = [0u8; 8];
        a.copy_from_slice(b);
        let n = u64::from_le_bytes(a);
        if n > (self.body.len() - self.at - 8) as u64 {
            return Err(self.bad(&format!("a length of {n} is more than the data hold")));
        }
        self.at += 8;
        Ok(n as usize)
    }
    fn bytes(&mut self) -> Result<&'a [u8]> {
        let n = self.count()?;
        let s = &self.body[self.at..self.at + n];
        self.at += n;
        Ok(s)
    }
    fn text(&mut self) -> Result<String> {
        let at = self.at;
        let b = self.bytes()?;
        String::from_utf8(b.to_vec())
            .map_err(|_| Error::parse("the sweep's inputs: a name that is not UTF-8").at_byte(at))
    }
}

// The reference of these checks is the same sweep computed in one piece on
// the inputs as loaded (common practice: a parallel split checked against
// the serial computation, to the bit), and the CLI's merge of the same
// slices' files.
#[cfg(test)]
mod tests {
    use super::*;
    use crate::recipe::{merge_sweep_csv, run_sweep, sweep_csv};

    /// The demo's files and recipe, its sweep replaced by `sweep` (or kept).
    fn demo(sweep: Option<serde_json::Value>) -> (MapSource, String) {
        let mut src = MapSource::default();
        let mut r = serde_json::Value::Null;
        for (n, b) in crate::demo_files::files().unwrap() {
            if n.ends_with(".recipe.json") {
                r = serde_json::from_slice(&b).unwrap();
            }
            src.0.insert(n, b);
        }
        if let Some(s) = sweep {
            r["sweep"] = s;
        }
        (src, r.to_string())
    }

    fn json(rep: &SweepReport) -> String {
        // serde_json writes the shortest text that reads back to the same
        // double, so equal text is equal bits
        serde_json::to_string(rep).unwrap()
    }

    #[test]
    fn inputs_reloaded_elsewhere_compute_the_same_slices_to_the_bit() {
        let lim = Limits::default();
        for sweep in [
            Some(
                serde_json::json!({"name": "isolator", "scale": "isolator", "from": 0.5, "to": 2.0, "steps": 5, "spacing": "log"}),
            ),
            None, // the demo's speed sweep
        ] {
            let (src, text) = demo(sweep);
            let r = crate::recipe::parse(&text).unwrap();
            let whole = run_sweep(&r, &src, &lim, None, 1).unwrap();
            let here = SweepInputs::gather(&text, &src, &lim).unwrap();
            let bytes = here.to_bytes();
            // a fresh copy, as an extra worker loads it: the same canonical
            // bytes of every set (their hash) and the same bytes written again
            let there = SweepInputs::from_bytes(&bytes).unwrap();
            assert_eq!(there.to_bytes(), bytes);
            assert_eq!(here.components.len(), r.components.len());
            for (k, s) in &here.components {
                assert_eq!(
                    crate::io::bundle::set_sha256(s),
                    crate::io::bundle::set_sha256(&there.components[k])
                );
            }
            for w in [1, 2, 3] {
                let slices: Vec<SweepReport> = (1..=w)
                    .map(|k| {
                        let inputs = if k == 1 { &here } else { &there };
                        inputs.slice(&text, k, w, &lim).unwrap()
                    })
                    .collect();
                // the CLI's merge of the slices' files gives the same file
                let files: Vec<(String, String)> = slices
                    .iter()
                    .enumerate()
                    .map(|(k, s)| (format!("s{k}"), sweep_csv(s, "h")))
                    .collect();
                let merged = merge_reports(slices).unwrap();
                assert_eq!(json(&merged), json(&whole), "{w} workers");
                assert_eq!(merge_sweep_csv(&files).unwrap(), sweep_csv(&whole, "h"));
            }
        }
    }

    #[test]
    fn a_damaged_copy_or_another_recipe_is_refused() {
        let lim = Limits::default();
        let (src, text) = demo(Some(
            serde_json::json!({"scale": "isolator", "values": [0.5, 1, 2]}),
        ));
        let inputs = SweepInputs::gather(&text, &src, &lim).unwrap();
        let bytes = inputs.to_bytes();
        let mut bad = bytes.clone();
        let mid = bad.len() / 2;
        bad[mid] ^= 1;
        let e = SweepInputs::from_bytes(&bad).unwrap_err().to_string();
        assert!(e.contains("SHA-256"), "{e}");
        let e = SweepInputs::from_bytes(&bytes[..bytes.len() - 1])
            .unwrap_err()
            .to_string();
        assert!(e.contains("SHA-256"), "{e}");
        let e = SweepInputs::from_bytes(b"mortise-set 1\n")
            .unwrap_err()
            .to_string();
        assert!(e.contains("mortise-sweep-inputs"), "{e}");
        let other = text.replace("isolator\"", "isolator\" ");
        let e = inputs.slice(&other, 1, 2, &lim).unwrap_err().to_string();
        assert!(e.contains("another recipe text"), "{e}");
    }

    #[test]
    fn a_set_with_missing_entries_coherence_and_provenance_reads_back() {
        use crate::frf::{Direction, Dof, Provenance, SignalKind};
        use crate::units::Quantity;
        let d = |n: &str| Dof::new("p", n, Direction::Y);
        let mut s = FrfSet::zeros(
            "p",
            vec![1.0, 2.5, 1e3],
            vec![d("1"), d("2")],
            vec![d("3")],
            Quantity::Acceleration,
            Quantity::Force,
        );
        s.data[1] = num_complex::Complex64::new(-0.0, f64::MIN_POSITIVE);
        s.data[3] = num_complex::Complex64::new(f64::NAN, f64::NAN);
        s.present[1] = false;
        s.coherence = Some(vec![0.5; 6]);
        s.provenance.push(Provenance {
            file: "a,b.uff".into(),
            sha256: "00".into(),
            format: "uff58-ascii".into(),
            options: "{}".into(),
        });
        s.warnings.push("ünïcode".into());
        s.signal = Some(SignalKind::Psd);
        let b = set_canonical_bytes(&s);
        let mut at = 0;
        let back = set_from_canonical_bytes(&b, &mut at, "t").unwrap();
        assert_eq!(at, b.len());
        assert_eq!(set_canonical_bytes(&back), b);
        assert_eq!(back.data[1].re.to_bits(), (-0.0f64).to_bits());
        assert!(back.data[3].re.is_nan());
        assert_eq!(back.present, s.present);
        // a cut copy is refused naming the byte
        let e = set_from_canonical_bytes(&b[..b.len() - 3], &mut 0, "t").unwrap_err();
        assert!(e.location.is_some());
    }

    #[test]
    fn workers_outside_one_to_eight_are_refused_naming_the_option() {
        assert_eq!(workers("1").unwrap(), 1);
        assert_eq!(workers(" 8 ").unwrap(), 8);
        for bad in ["0", "9", "-1", "2.5", "", "two"] {
            let e = workers(bad).unwrap_err();
            assert_eq!(e.field.as_deref(), Some("workers"), "{bad}");
            assert!(e.message.contains("1 to 8"), "{}", e.message);
        }
    }

    #[test]
    fn a_failed_slice_fails_the_fold_and_slices_must_cover_every_point() {
        let lim = Limits::default();
        let (src, text) = demo(Some(
            serde_json::json!({"scale": "isolator", "values": [0.5, 1, 2, 4]}),
        ));
        let inputs = SweepInputs::gather(&text, &src, &lim).unwrap();
        let s: Vec<SweepReport> = (1..=3)
            .map(|k| inputs.slice(&text, k, 3, &lim).unwrap())
            .collect();
        let e = fold_slices(vec![
            Ok(s[0].clone()),
            Err(Error::new(
                crate::error::ErrorKind::Budget,
                "slice 2's own error",
            )),
            Err(Error::usage("slice 3's")),
        ])
        .unwrap_err();
        assert!(e.message.contains("slice 2's own error"), "{e}");
        // a gap and an overlap, named as `mortise merge` names them
        let e = merge_reports(vec![s[0].clone(), s[2].clone()]).unwrap_err();
        assert!(e.message.contains("missing"), "{e}");
        let e = merge_reports(vec![s[0].clone(), s[0].clone(), s[1].clone(), s[2].clone()])
            .unwrap_err();
        assert!(e.message.contains("overlap"), "{e}");
        assert_eq!(
            json(&merge_reports(s.clone()).unwrap()),
            json(&run_sweep(&crate::recipe::parse(&text).unwrap(), &src, &lim, None, 2).unwrap())
        );
    }
}
