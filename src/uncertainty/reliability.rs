//! Which lines of a result can be trusted: a flag per value (entry and
//! line) from the propagated uncertainty, the inputs' own noise, the
//! cancellation and the interface conditioning, and band-by-band statements
//! in words.
//!
//! Rules (each with its default). With u the propagated standard
//! uncertainty, u/√2 is the standard deviation of |Y| (circular error, see
//! [`super::model`]), so the 95 % interval of |Y| is |Y| (1 ± 1.96 u/(√2|Y|))
//! (normal approximation):
//! * **below the input noise**: that interval reaches zero, u/|Y| ≥ √2/1.96
//!   = 0.72.
//! * **uncertain**: the interval is wider than ±3 dB (its lower end, the
//!   wider side, below −3 dB: u/|Y| ≥ 0.211).
//! * **an input below its noise**: an input value the result's formula reads
//!   has u/|H| ≥ 0.3 (median over five lines, see
//!   [`super::first_order`]). The first-order propagation is linearized at
//!   the measured values; where an input is dominated by its noise that point
//!   is far from the truth and the propagated u can be far too small. The
//!   bar is low because u/|H| is judged on the noisy value itself: a value
//!   that is pure circular noise passes 0.72 on a line with probability
//!   e^(−1/0.72²) = 15 %, 0.3 with e^(−1/0.09) = 1.5·10⁻⁵.
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
    /// Half-width in dB the 95 % level interval of a reliable value may
    /// have (default 3 dB).
    pub max_interval_db: f64,
    /// Largest u/|H| of an input value a reliable result value reads
    /// (default 0.3).
    pub max_input_relative: f64,
    /// Largest cancellation ratio of a reliable value (default 10: 20 dB).
    pub max_cancellation: f64,
    /// Largest interface condition number of a reliable line (default 1e6).
    pub max_condition: f64,
}

impl Default for ReliabilityOptions {
    fn default() -> Self {
        ReliabilityOptions {
            max_interval_db: 3.0,
            max_input_relative: 0.3,
            max_cancellation: 10.0,
            max_condition: 1e6,
        }
    }
}

impl ReliabilityOptions {
    /// The u/|Y| at which the 95 % interval's lower end is `max_interval_db`
    /// below |Y|: (1 − 10^(−dB/20)) · √2 / 1.96.
    pub fn max_relative(&self) -> f64 {
        (1.0 - 10f64.powf(-self.max_interval_db / 20.0)) * std::f64::consts::SQRT_2 / Z95
    }
}

/// u/|Y| at which the 95 % interval of |Y| reaches zero: √2 / 1.96.
pub const NOISE_RELATIVE: f64 = std::f64::consts::SQRT_2 / Z95;

/// Why a value is unreliable: a bit set.
pub const BELOW_NOISE: u8 = 1;
pub const CANCELLATION: u8 = 2;
pub const ILL_CONDITIONED: u8 = 4;
pub const INPUT_NOISE: u8 = 8;
pub const UNCERTAIN: u8 = 16;

/// The reasons of a flag in words.
pub fn reasons(flag: u8) -> Vec<&'static str> {
    let mut v = Vec::new();
    if flag & BELOW_NOISE != 0 {
        v.push("below the input noise");
    }
    if flag & INPUT_NOISE != 0 {
        v.push("an input below its noise");
    }
    if flag & CANCELLATION != 0 {
        v.push("cancellation");
    }
    if flag & ILL_CONDITIONED != 0 {
        v.push("ill-conditioned interface");
    }
    if flag & UNCERTAIN != 0 {
        v.push("95 % interval wider than the limit");
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
    /// the reasons found on the lines of the range
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

/// What [`assess`] reads, each in the set's data layout (`None` when not known).
#[derive(Debug, Clone, Copy, Default)]
pub struct Evidence<'a> {
    /// propagated standard uncertainty per value
    pub std: Option<&'a [f64]>,
    /// largest relative uncertainty of the inputs each value reads
    pub input_relative: Option<&'a [f64]>,
    /// cancellation ratio per value
    pub cancellation: Option<&'a [f64]>,
    /// interface condition number per line
    pub condition: Option<&'a [f64]>,
}

impl<'a> Evidence<'a> {
    /// Everything a coupling's first-order propagation and its interface
    /// conditioning give.
    pub fn of_coupling(fo: &'a super::FirstOrder, condition: &'a [f64]) -> Evidence<'a> {
        Evidence {
            std: Some(&fo.uncertainty.std),
            input_relative: Some(&fo.input_relative),
            cancellation: Some(&fo.cancellation),
            condition: Some(condition),
        }
    }
}

/// Flag the values of `set` from the evidence (see the module docs).
pub fn assess(set: &FrfSet, ev: &Evidence, opts: &ReliabilityOptions) -> Reliability {
    let Evidence {
        std,
        input_relative,
        cancellation,
        condition,
    } = *ev;
    let (no, ni, nl) = (set.n_out(), set.n_in(), set.n_lines());
    let mut flags = vec![0u8; set.data.len()];
    let max_rel = opts.max_relative();
    for k in 0..nl {
        let ill = condition
            .and_then(|c| c.get(k))
            .is_some_and(|&c| c.is_nan() || c >= opts.max_condition);
        for i in 0..no {
            for j in 0..ni {
                if !set.is_present(i, j) {
                    continue;
                }
                let x = set.idx(k, i, j);
                let mut f = 0u8;
                let mag = set.data[x].norm();
                if let Some(u) = std.and_then(|s| s.get(x)) {
                    if !u.is_nan() && *u > 0.0 {
                        if *u >= NOISE_RELATIVE * mag {
                            f |= BELOW_NOISE;
                        } else if *u >= max_rel * mag {
                            f |= UNCERTAIN;
                        }
                    }
                }
                if let Some(r) = input_relative.and_then(|r| r.get(x)) {
                    if *r >= opts.max_input_relative {
                        f |= INPUT_NOISE;
                    }
                }
                if let Some(c) = cancellation.and_then(|c| c.get(x)) {
                    if *c >= opts.max_cancellation {
                        f |= CANCELLATION;
                    }
                }
                if ill {
                    f |= ILL_CONDITIONED;
                }
                flags[x] = f;
            }
        }
    }
    from_flags(set, flags, opts)
}

/// Every reason bit a flag may carry.
pub const ALL_REASONS: u8 = BELOW_NOISE | CANCELLATION | ILL_CONDITIONED | INPUT_NOISE | UNCERTAIN;

/// The reliability that per-value flags give (a bundle carries only the
/// flags): the fraction of present values flagged, the unreliable ranges
/// and their statements.
pub fn from_flags(set: &FrfSet, mut flags: Vec<u8>, opts: &ReliabilityOptions) -> Reliability {
    flags.resize(set.data.len(), 0);
    let (no, ni, nl) = (set.n_out(), set.n_in(), set.n_lines());
    let (mut present, mut flagged) = (0usize, 0usize);
    for i in 0..no {
        for j in 0..ni {
            if set.is_present(i, j) {
                for k in 0..nl {
                    present += 1;
                    flagged += usize::from(flags[set.idx(k, i, j)] != 0);
                }
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
                let mut why = 0u8;
                while k < nl && flags[set.idx(k, i, j)] != 0 {
                    why |= flags[set.idx(k, i, j)];
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

/// The 95 % interval of the dB level of a value of kind `signal` with
/// standard uncertainty `u`, as absolute levels: `level_db` the value's
/// level as plotted. Amplitudes (FRFs, peak and RMS spectra) take the
/// circular form of [`interval_db`]; mean-square values (autopower, PSD,
/// ESD: real errors, as [`crate::uncertainty::chain`] propagates them) take
/// 10·log10(1 ∓ 1.96·u/|P|); a cross spectrum (complex, circular) takes
/// 10·log10(1 ∓ 1.96·u/(√2|S|)). The lower end is −∞ when the interval
/// reaches zero; both are NaN when `u` is not a finite non-negative number
/// or the value is exactly zero (an empty line of a line spectrum: its level
/// is −∞ and has no interval to draw).
pub fn level_interval_db(
    value: num_complex::Complex64,
    u: f64,
    signal: Option<crate::frf::SignalKind>,
    level_db: f64,
) -> (f64, f64) {
    use crate::frf::SignalKind as K;
    if !(u.is_finite() && u >= 0.0) || value.norm() == 0.0 {
        return (f64::NAN, f64::NAN);
    }
    let (mag, spread, factor) = match signal {
        Some(K::Autopower | K::Psd | K::Esd) => (value.re.abs(), 1.0, 10.0),
        Some(K::Cross) => (value.norm(), std::f64::consts::SQRT_2, 10.0),
        _ => (value.norm(), std::f64::consts::SQRT_2, 20.0),
    };
    let r = Z95 * u / (spread * mag);
    let lo = if r >= 1.0 || !r.is_finite() {
        f64::NEG_INFINITY
    } else {
        level_db + factor * (1.0 - r).log10()
    };
    let hi = if r.is_finite() {
        level_db + factor * (1.0 + r).log10()
    } else {
        f64::INFINITY
    };
    (lo, hi)
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
        let s = set(&[1.0; 6]);
        let u = [0.1, 0.1, 0.1, 0.8, 2.0, 0.25];
        let ir = [0.0, 0.0, 0.0, 0.2, 0.3, 0.0];
        let c = [12.0, 1.0, 1.0, 1.0, 1.0, 1.0];
        let cond = [1.0, 1.0, 1e7, 1.0, 1.0, 1.0];
        let ev = Evidence {
            std: Some(&u),
            input_relative: Some(&ir),
            cancellation: Some(&c),
            condition: Some(&cond),
        };
        let r = assess(&s, &ev, &ReliabilityOptions::default());
        assert_eq!(
            r.flags,
            vec![
                CANCELLATION,
                0,
                ILL_CONDITIONED,
                BELOW_NOISE,
                BELOW_NOISE | INPUT_NOISE,
                UNCERTAIN
            ]
        );
        assert!((r.fraction_flagged - 5.0 / 6.0).abs() < 1e-15);
        // consecutive flagged lines form one range with all their reasons
        assert_eq!(r.bands.len(), 2);
        let st = &r.statements[0];
        assert!(st.contains("up to 100 Hz (cancellation)"), "{st}");
        assert!(
            st.contains("above 300 Hz (below the input noise, an input below its noise, ill-conditioned interface, 95 % interval wider than the limit)"),
            "{st}"
        );
        assert!(r.is_reliable(&s, 1, 0, 0));
        assert!(!r.is_reliable(&s, 4, 0, 0));
    }

    #[test]
    fn thresholds_follow_the_95_percent_interval() {
        // 1.96 · u / √2 = |Y|: the interval reaches zero
        assert!((NOISE_RELATIVE * Z95 / 2f64.sqrt() - 1.0).abs() < 1e-15);
        let (lo, hi) = interval_db(1.0, NOISE_RELATIVE * 0.999);
        assert!(lo < -59.0 && lo.is_finite() && (hi - 20.0 * 2f64.log10()).abs() < 1e-2);
        assert_eq!(interval_db(1.0, NOISE_RELATIVE).0, f64::NEG_INFINITY);
        // ±3 dB: the lower end at −3 dB, hand-worked: (1 − 0.70795) · 1.41421 / 1.95996 = 0.21073
        let o = ReliabilityOptions::default();
        assert!((o.max_relative() - 0.210_73).abs() < 1e-5);
        assert!((interval_db(1.0, o.max_relative()).0 + 3.0).abs() < 1e-12);
        // small u: ±1.96 · u/√2 relative, 20·log10(1.0139) = 0.1196 dB for u = 0.01
        let (lo, hi) = interval_db(1.0, 0.01);
        assert!(
            (hi - 0.119_6).abs() < 1e-3 && (lo + 0.121_3).abs() < 1e-3,
            "{lo} {hi}"
        );
    }

    #[test]
    fn level_interval_by_kind() {
        use crate::frf::SignalKind;
        // hand-worked: r = 1.959964·0.1/(√2·1) = 0.1385904; 20·log10(1 ∓ r)
        let v = Complex64::new(1.0, 0.0);
        let (lo, hi) = level_interval_db(v, 0.1, None, 0.0);
        assert!(
            (lo - 20.0 * (1.0 - 0.138_590_4_f64).log10()).abs() < 1e-5,
            "{lo}"
        );
        assert!(
            (hi - 20.0 * (1.0 + 0.138_590_4_f64).log10()).abs() < 1e-5,
            "{hi}"
        );
        // mean square, real error: r = 1.96·0.1 = 0.196; 10·log10(1 ∓ r) about 40 dB
        let (lo, hi) = level_interval_db(v, 0.1, Some(SignalKind::Psd), 40.0);
        assert!(
            (lo - (40.0 + 10.0 * 0.804_f64.log10())).abs() < 1e-3,
            "{lo}"
        );
        assert!(
            (hi - (40.0 + 10.0 * 1.196_f64.log10())).abs() < 1e-3,
            "{hi}"
        );
        // the interval reaches zero
        assert_eq!(level_interval_db(v, 1.0, None, 0.0).0, f64::NEG_INFINITY);
        assert!(level_interval_db(v, f64::NAN, None, 0.0).1.is_nan());
        assert!(
            level_interval_db(Complex64::new(0.0, 0.0), 0.0, None, f64::NEG_INFINITY)
                .0
                .is_nan()
        );
    }
}
