//! Which lines of a result can be trusted: a flag per value (entry and
//! line) from the propagated uncertainty, the cancellation and the
//! interface conditioning, and band-by-band statements in words.
//!
//! Rules (each with its default):
//! * **below the noise**: the 95 % interval of |Y| reaches zero, i.e.
//!   1.96 · u/√2 ≥ |Y| (u/√2 is the standard deviation of |Y| for a circular
//!   error, see [`super::model`]; normal approximation): u/|Y| ≥ 0.72.
//! * **cancellation**: the result is 20 dB or more below the larger of the
//!   two terms it is the difference of (ratio ≥ 10; a small relative error of
//!   the terms becomes a large one of the result).
//! * **ill-conditioned interface**: the 2-norm condition number of the
//!   interface matrix is 10⁶ or more (common practice: a relative input error
//!   of 10⁻⁶, far below any measurement, can then change the result by 100 %).

use crate::frf::FrfSet;
use serde::{Deserialize, Serialize};

/// The standard normal quantile of 97.5 % (two-sided 95 %).
pub const Z95: f64 = 1.959_963_984_540_054;

/// Thresholds of the reliability rules.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ReliabilityOptions {
    /// Largest u/|Y| of a reliable value (default √2 / 1.96 = 0.72).
    pub max_relative: f64,
    /// Largest cancellation ratio of a reliable value (default 10: 20 dB).
    pub max_cancellation: f64,
    /// Largest interface condition number of a reliable line (default 1e6).
    pub max_condition: f64,
}

impl Default for ReliabilityOptions {
    fn default() -> Self {
        ReliabilityOptions {
            max_relative: std::f64::consts::SQRT_2 / Z95,
            max_cancellation: 10.0,
            max_condition: 1e6,
        }
    }
}

/// Why a value is unreliable: a bit set.
pub const BELOW_NOISE: u8 = 1;
pub const CANCELLATION: u8 = 2;
pub const ILL_CONDITIONED: u8 = 4;

/// The reasons of a flag in words.
pub fn reasons(flag: u8) -> Vec<&'static str> {
    let mut v = Vec::new();
    if flag & BELOW_NOISE != 0 {
        v.push("below the input noise");
    }
    if flag & CANCELLATION != 0 {
        v.push("cancellation");
    }
    if flag & ILL_CONDITIONED != 0 {
        v.push("ill-conditioned interface");
    }
    v
}

/// One frequency range of one entry where the result is unreliable.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Band {
    /// "output / input"
    pub entry: String,
    pub from_hz: f64,
    pub to_hz: f64,
    /// the reasons (the same on every line of the range)
    pub reasons: Vec<String>,
}

/// The reliability of one result.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Reliability {
    /// Per value (the set's data layout): 0 reliable, else the reason bits;
    /// missing entries 0.
    pub flags: Vec<u8>,
    /// Fraction of the present values flagged.
    pub fraction_flagged: f64,
    /// The unreliable ranges, entry by entry.
    pub bands: Vec<Band>,
    /// The ranges in words, one statement per entry (at most 40 entries,
    /// then a count of the rest).
    pub statements: Vec<String>,
    pub options: ReliabilityOptions,
}

impl Reliability {
    /// Whether line `k` of entry (i, j) of `set` is reliable.
    pub fn is_reliable(&self, set: &FrfSet, k: usize, i: usize, j: usize) -> bool {
        matches!(self.flags.get(set.idx(k, i, j)), None | Some(0))
    }
}

/// Flag the values of `set` from its propagated standard uncertainty `std`
/// (same layout; `None` when no input uncertainty was given), the
/// cancellation ratios (same layout, `None` when not known) and the
/// interface condition number per line (`None` when not a coupling).
pub fn assess(
    set: &FrfSet,
    std: Option<&[f64]>,
    cancellation: Option<&[f64]>,
    condition: Option<&[f64]>,
    opts: &ReliabilityOptions,
) -> Reliability {
    let (no, ni, nl) = (set.n_out(), set.n_in(), set.n_lines());
    let mut flags = vec![0u8; set.data.len()];
    let (mut present, mut flagged) = (0usize, 0usize);
    for k in 0..nl {
        let ill = condition
            .and_then(|c| c.get(k))
            .is_some_and(|&c| !(c < opts.max_condition));
        for i in 0..no {
            for j in 0..ni {
                if !set.is_present(i, j) {
                    continue;
                }
                let x = set.idx(k, i, j);
                let mut f = 0u8;
                let mag = set.data[x].norm();
                if let Some(u) = std.and_then(|s| s.get(x)) {
                    if u.is_finite() && *u >= opts.max_relative * mag && *u > 0.0 {
                        f |= BELOW_NOISE;
                    }
                }
                if let Some(c) = cancellation.and_then(|c| c.get(x)) {
                    if !(*c < opts.max_cancellation) && !c.is_nan() {
                        f |= CANCELLATION;
                    }
                }
                if ill {
                    f |= ILL_CONDITIONED;
                }
                flags[x] = f;
                present += 1;
                flagged += usize::from(f != 0);
            }
        }
    }
    // ranges of consecutive flagged lines per entry
    let mut bands = Vec::new();
    for i in 0..no {
        for j in 0..ni {
            if !set.is_present(i, j) {
                continue;
            }
            let mut k = 0;
            while k < nl {
                if flags[set.idx(k, i, j)] == 0 {
                    k += 1;
                    continue;
                }
                let start = k;
                let why = flags[set.idx(k, i, j)];
                while k < nl && flags[set.idx(k, i, j)] == why {
                    k += 1;
                }
                bands.push(Band {
                    entry: format!("{} / {}", set.outputs[i], set.inputs[j]),
                    from_hz: set.freqs[start],
                    to_hz: set.freqs[k - 1],
                    reasons: reasons(why).into_iter().map(String::from).collect(),
                });
            }
        }
    }
    let statements = statements(&bands, set);
    Reliability {
        flags,
        fraction_flagged: if present == 0 {
            0.0
        } else {
            flagged as f64 / present as f64
        },
        bands,
        statements,
        options: *opts,
    }
}

fn hz(f: f64) -> String {
    let t = format!("{f:.1}");
    t.strip_suffix(".0").unwrap_or(&t).to_string()
}

/// One sentence per entry: "A:1+X / B:2+Z is unreliable at 1–6 Hz
/// (cancellation), above 160 Hz (below the input noise)".
fn statements(bands: &[Band], set: &FrfSet) -> Vec<String> {
    const MAX_ENTRIES: usize = 40;
    const MAX_RANGES: usize = 6;
    let (lo, hi) = match (set.freqs.first(), set.freqs.last()) {
        (Some(&a), Some(&b)) => (a, b),
        _ => return Vec::new(),
    };
    let mut out = Vec::new();
    let mut entries: Vec<&str> = Vec::new();
    for b in bands {
        if !entries.contains(&b.entry.as_str()) {
            entries.push(&b.entry);
        }
    }
    for e in entries.iter().take(MAX_ENTRIES) {
        let mine: Vec<&Band> = bands.iter().filter(|b| b.entry == *e).collect();
        let mut parts: Vec<String> = mine
            .iter()
            .take(MAX_RANGES)
            .map(|b| {
                let range = if b.from_hz <= lo && b.to_hz >= hi {
                    "over the whole band".to_string()
                } else if b.to_hz >= hi {
                    format!("above {} Hz", hz(b.from_hz))
                } else if b.from_hz <= lo {
                    format!("up to {} Hz", hz(b.to_hz))
                } else if b.from_hz == b.to_hz {
                    format!("at {} Hz", hz(b.from_hz))
                } else {
                    format!("at {}–{} Hz", hz(b.from_hz), hz(b.to_hz))
                };
                format!("{range} ({})", b.reasons.join(", "))
            })
            .collect();
        if mine.len() > MAX_RANGES {
            parts.push(format!("and {} more ranges", mine.len() - MAX_RANGES));
        }
        out.push(format!(
            "'{}' {e} is unreliable {}",
            set.name,
            parts.join("; ")
        ));
    }
    if entries.len() > MAX_ENTRIES {
        out.push(format!(
            "'{}': {} more entries have unreliable ranges (see the bands)",
            set.name,
            entries.len() - MAX_ENTRIES
        ));
    }
    out
}

/// The 95 % interval of the level of a value of magnitude `mag` with
/// standard uncertainty `u` (circular), in dB relative to `mag`:
/// 20·log10(1 ∓ 1.96 · u/(√2 |Y|)); the lower end is −∞ when the interval
/// reaches zero.
pub fn interval_db(mag: f64, u: f64) -> (f64, f64) {
    let r = Z95 * u / (std::f64::consts::SQRT_2 * mag);
    let lo = if r >= 1.0 {
        f64::NEG_INFINITY
    } else {
        20.0 * (1.0 - r).log10()
    };
    (lo, 20.0 * (1.0 + r).log10())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;
    use crate::units::Quantity;
    use num_complex::Complex64;

    fn set(vals: &[f64]) -> FrfSet {
        let freqs: Vec<f64> = (0..vals.len()).map(|k| 100.0 * (k + 1) as f64).collect();
        let d = Dof::parse("a:1+Z", "").unwrap();
        let mut s = FrfSet::zeros(
            "r",
            freqs,
            vec![d.clone()],
            vec![d],
            Quantity::Acceleration,
            Quantity::Force,
        );
        s.data = vals.iter().map(|&v| Complex64::new(v, 0.0)).collect();
        s
    }

    #[test]
    fn flags_by_each_rule_and_states_the_ranges() {
        let s = set(&[1.0, 1.0, 1.0, 1.0, 1.0]);
        let u = [0.1, 0.1, 0.1, 0.8, 2.0];
        let c = [12.0, 1.0, 1.0, 1.0, 1.0];
        let cond = [1.0, 1.0, 1e7, 1.0, 1.0];
        let r = assess(
            &s,
            Some(&u),
            Some(&c),
            Some(&cond),
            &ReliabilityOptions::default(),
        );
        assert_eq!(
            r.flags,
            vec![CANCELLATION, 0, ILL_CONDITIONED, BELOW_NOISE, BELOW_NOISE]
        );
        assert!((r.fraction_flagged - 0.8).abs() < 1e-15);
        assert_eq!(r.bands.len(), 3);
        let st = &r.statements[0];
        assert!(st.contains("up to 100 Hz (cancellation)"), "{st}");
        assert!(st.contains("at 300 Hz (ill-conditioned interface)"), "{st}");
        assert!(st.contains("above 400 Hz (below the input noise)"), "{st}");
        assert!(r.is_reliable(&s, 1, 0, 0));
        assert!(!r.is_reliable(&s, 4, 0, 0));
    }

    #[test]
    fn noise_threshold_is_where_the_95_percent_interval_reaches_zero() {
        let o = ReliabilityOptions::default();
        // 1.96 · u / √2 = |Y|
        assert!((o.max_relative * Z95 / 2f64.sqrt() - 1.0).abs() < 1e-15);
        let (lo, hi) = interval_db(1.0, o.max_relative * 0.999);
        assert!(lo < -59.0 && lo.is_finite() && (hi - 20.0 * 2f64.log10()).abs() < 1e-2);
        assert_eq!(interval_db(1.0, o.max_relative).0, f64::NEG_INFINITY);
        // small u: ±1.96 · u/√2 relative, 20·log10(1.0139) = 0.1196 dB for u = 0.01
        let (lo, hi) = interval_db(1.0, 0.01);
        assert!(
            (hi - 0.119_6).abs() < 1e-3 && (lo + 0.121_3).abs() < 1e-3,
            "{lo} {hi}"
        );
    }
}
