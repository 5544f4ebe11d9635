//! Levels in dB, frequency weightings and fractional-octave bands.
//!
//! * **References** (ISO 1683:2015, preferred reference values): sound
//!   pressure 20 µPa, displacement 1 pm, velocity 1 nm/s, acceleration
//!   1 µm/s², force 1 µN. ISO 1683 gives no values for rotations, moments,
//!   volume velocity or ratios; mortise then uses one SI unit (1 rad, 1 rad/s,
//!   1 rad/s², 1 N·m, 1 m³/s, 1) and says so in the label.
//! * **Weightings** A and C (IEC 61672-1:2013) from the analytic pole
//!   frequencies, normalised to 0 dB at 1 kHz; Z is no weighting.
//! * **Bands** (IEC 61260-1:2014, base ten): G = 10^(3/10); for bandwidth
//!   designator 1/b the exact mid-band frequency of band x is
//!   f_m = 1000·G^(x/b) when b is odd and f_m = 1000·G^((2x+1)/(2b)) when b
//!   is even; the edges are f_m·G^(±1/(2b)).
//! * **Band levels from narrow-band lines**: the mean-square values of the
//!   lines whose frequency f satisfies lower ≤ f < upper are added (a line
//!   exactly on an edge belongs to the band above it). A weighting is applied
//!   line by line at each line's own frequency before summing.

use crate::error::{Error, Result};
use crate::frf::{FrfSet, SignalKind};
use crate::units::Quantity;

/// The reference value of a level.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Reference {
    /// SI value of the reference (for motions and loads, the value the RMS is divided by).
    pub value: f64,
    /// The reference as text, e.g. "1 nm/s".
    pub text: String,
    /// True when ISO 1683 gives this reference; false for mortise's own choice.
    pub standardised: bool,
}

/// The reference of `q` on a translational (`rotational == false`) or rotational DOF.
///
/// ```
/// use mortise::levels::reference;
/// use mortise::units::Quantity;
/// assert_eq!(reference(Quantity::Velocity, false).value, 1e-9);
/// assert_eq!(reference(Quantity::Pressure, false).text, "20 µPa");
/// ```
pub fn reference(q: Quantity, rotational: bool) -> Reference {
    let (value, text, std) = match (q, rotational) {
        (Quantity::Pressure, _) => (20e-6, "20 µPa", true),
        (Quantity::Displacement, false) => (1e-12, "1 pm", true),
        (Quantity::Velocity, false) => (1e-9, "1 nm/s", true),
        (Quantity::Acceleration, false) => (1e-6, "1 µm/s²", true),
        (Quantity::Force, false) => (1e-6, "1 µN", true),
        (Quantity::Displacement, true) => (1.0, "1 rad", false),
        (Quantity::Velocity, true) => (1.0, "1 rad/s", false),
        (Quantity::Acceleration, true) => (1.0, "1 rad/s²", false),
        (Quantity::Force, true) => (1.0, "1 N·m", false),
        (Quantity::VolumeVelocity, _) => (1.0, "1 m³/s", false),
        (Quantity::Dimensionless, _) => (1.0, "1", false),
    };
    Reference {
        value,
        text: text.to_string(),
        standardised: std,
    }
}

/// The axis label of a level, e.g. "dB re 1 nm/s"; a reference that no
/// standard gives is marked "(no standard reference)".
pub fn axis_label(q: Quantity, rotational: bool) -> String {
    let r = reference(q, rotational);
    if r.standardised {
        format!("dB re {}", r.text)
    } else {
        format!("dB re {} (no standard reference)", r.text)
    }
}

/// Level of an RMS (root-power) value: 20·log10(rms / reference).
pub fn db_rms(rms: f64, reference: f64) -> f64 {
    20.0 * (rms.abs() / reference).log10()
}

/// Level of a mean-square value: 10·log10(ms / reference²).
pub fn db_mean_square(ms: f64, reference: f64) -> f64 {
    10.0 * (ms / (reference * reference)).log10()
}

/// Level of a power quantity (power, energy, intensity): 10·log10(p / p_ref).
pub fn db_power(p: f64, p_ref: f64) -> f64 {
    10.0 * (p / p_ref).log10()
}

/// Mean square back from a level: reference²·10^(L/10).
pub fn mean_square_from_db(level: f64, reference: f64) -> f64 {
    reference * reference * 10f64.powf(level / 10.0)
}

/// A frequency weighting.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum Weighting {
    /// No weighting (IEC 61672-1 "Z").
    #[default]
    Z,
    A,
    C,
}

impl Weighting {
    pub fn name(self) -> &'static str {
        match self {
            Weighting::Z => "Z",
            Weighting::A => "A",
            Weighting::C => "C",
        }
    }
    pub fn parse(s: &str) -> Result<Weighting> {
        match s.trim().to_ascii_uppercase().as_str() {
            "Z" | "NONE" | "" => Ok(Weighting::Z),
            "A" => Ok(Weighting::A),
            "C" => Ok(Weighting::C),
            _ => Err(Error::usage(format!(
                "unknown weighting '{s}'; expected A, C or Z (none)"
            ))),
        }
    }
}

/// IEC 61672-1:2013 pole frequencies f1..f4 (Hz) of the A and C weightings.
pub const WEIGHTING_POLES: [f64; 4] = [20.598997, 107.65265, 737.86223, 12194.217];

fn r_a(f: f64) -> f64 {
    let [f1, f2, f3, f4] = WEIGHTING_POLES;
    let f2s = f * f;
    f4 * f4 * f2s * f2s
        / ((f2s + f1 * f1) * ((f2s + f2 * f2) * (f2s + f3 * f3)).sqrt() * (f2s + f4 * f4))
}

fn r_c(f: f64) -> f64 {
    let [f1, _, _, f4] = WEIGHTING_POLES;
    let f2s = f * f;
    f4 * f4 * f2s / ((f2s + f1 * f1) * (f2s + f4 * f4))
}

/// The weighting in dB at frequency `f` (Hz), 0 dB at 1 kHz by construction;
/// −∞ at 0 Hz for A and C.
pub fn weighting_db(w: Weighting, f: f64) -> f64 {
    match w {
        Weighting::Z => 0.0,
        Weighting::A => 20.0 * (r_a(f) / r_a(1000.0)).log10(),
        Weighting::C => 20.0 * (r_c(f) / r_c(1000.0)).log10(),
    }
}

/// The weighting as a factor on mean-square values (10^(W/10)); 0 at 0 Hz for A and C.
pub fn weighting_power_factor(w: Weighting, f: f64) -> f64 {
    match w {
        Weighting::Z => 1.0,
        Weighting::A => (r_a(f) / r_a(1000.0)).powi(2),
        Weighting::C => (r_c(f) / r_c(1000.0)).powi(2),
    }
}

/// The octave ratio, base ten (IEC 61260-1).
pub fn octave_ratio() -> f64 {
    10f64.powf(0.3)
}

/// One fractional-octave band.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Band {
    /// Bandwidth designator denominator b (1 = octave, 3 = one-third octave).
    pub b: u32,
    /// Band number x (0 is the band at 1 kHz for odd b).
    pub index: i32,
    /// Exact mid-band frequency, Hz.
    pub center: f64,
    pub lower: f64,
    pub upper: f64,
    /// Nominal mid-band frequency (preferred numbers for octaves and
    /// one-third octaves; three significant figures otherwise).
    pub nominal: f64,
    /// The nominal frequency as text, e.g. "31.5", "1k", "12.5k".
    pub label: String,
}

impl Band {
    /// Band x of bandwidth 1/b.
    pub fn new(b: u32, index: i32) -> Result<Band> {
        if b == 0 || b > 48 {
            return Err(Error::recipe(format!(
                "band width 1/{b}: expected b between 1 (octave) and 48"
            )));
        }
        let g = octave_ratio();
        let bf = b as f64;
        let center = if b % 2 == 1 {
            1000.0 * g.powf(index as f64 / bf)
        } else {
            1000.0 * g.powf((2 * index + 1) as f64 / (2.0 * bf))
        };
        let half = g.powf(1.0 / (2.0 * bf));
        let nominal = nominal_frequency(b, index, center);
        Ok(Band {
            b,
            index,
            center,
            lower: center / half,
            upper: center * half,
            nominal,
            label: nominal_label(nominal),
        })
    }
    /// True when a line at `f` belongs to the band (lower ≤ f < upper).
    pub fn contains(&self, f: f64) -> bool {
        f >= self.lower && f < self.upper
    }
}

/// Preferred-number mantissas of the one-third-octave series (R10, rounded).
const R10: [f64; 10] = [1.0, 1.25, 1.6, 2.0, 2.5, 3.15, 4.0, 5.0, 6.3, 8.0];

fn nominal_frequency(b: u32, index: i32, center: f64) -> f64 {
    let third = match b {
        1 => Some(3 * index),
        3 => Some(index),
        _ => None,
    };
    match third {
        Some(t) => {
            let m = t.rem_euclid(10) as usize;
            let e = t.div_euclid(10) + 3;
            R10[m] * 10f64.powi(e)
        }
        None => round_sig(center, 3),
    }
}

fn round_sig(x: f64, digits: i32) -> f64 {
    if x <= 0.0 || !x.is_finite() {
        return x;
    }
    let p = digits - 1 - x.log10().floor() as i32;
    let s = 10f64.powi(p);
    (x * s).round() / s
}

fn nominal_label(f: f64) -> String {
    let trim = |v: f64| {
        let s = format!("{:.3}", v);
        let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
        s
    };
    if f >= 1000.0 {
        format!("{}k", trim(f / 1000.0))
    } else {
        trim(f)
    }
}

/// The bands of width 1/b that contain at least one frequency of
/// [f_min, f_max] (f_min > 0), in increasing order.
pub fn bands_covering(b: u32, f_min: f64, f_max: f64) -> Result<Vec<Band>> {
    if !(f_min > 0.0 && f_max >= f_min && f_max.is_finite()) {
        return Err(Error::grid(format!(
            "bands need a positive frequency range; found {f_min} to {f_max} Hz"
        )));
    }
    // band number from frequency, then step to make sure the ends are covered
    let g = octave_ratio();
    let bf = b as f64;
    let guess = |f: f64| -> i32 {
        let x = (f / 1000.0).log(g) * bf;
        if b % 2 == 1 {
            x.round() as i32
        } else {
            ((x - 0.5).round()) as i32
        }
    };
    let mut lo = guess(f_min) - 1;
    while Band::new(b, lo)?.upper <= f_min {
        lo += 1;
    }
    let mut out = Vec::new();
    let mut x = lo;
    loop {
        let band = Band::new(b, x)?;
        if band.lower > f_max {
            break;
        }
        out.push(band);
        x += 1;
    }
    Ok(out)
}

/// The width each line stands for, Hz: half the distance to each neighbour
/// (the neighbouring spacing at the ends), so a uniform grid gives Δf at
/// every line. A single line has no width and is an error.
pub fn line_widths(freqs: &[f64]) -> Result<Vec<f64>> {
    let n = freqs.len();
    if n < 2 {
        return Err(Error::grid(
            "a PSD needs at least two lines to know the line width",
        ));
    }
    Ok((0..n)
        .map(|k| {
            if k == 0 {
                freqs[1] - freqs[0]
            } else if k == n - 1 {
                freqs[n - 1] - freqs[n - 2]
            } else {
                0.5 * (freqs[k + 1] - freqs[k - 1])
            }
        })
        .collect())
}

/// Mean-square value of each line of spectrum row `out` of a signal set:
/// peak |X|²/2, RMS |X|², autopower as is, PSD × line width.
pub fn line_mean_squares(set: &FrfSet, out: usize) -> Result<Vec<f64>> {
    let kind = set.signal.ok_or_else(|| {
        Error::quantity(format!(
            "'{}' is an FRF set, not a spectrum; levels need a spectrum (peak, RMS, autopower or PSD)",
            set.name
        ))
    })?;
    if set.n_in() != 1 || out >= set.n_out() {
        return Err(Error::quantity(format!(
            "'{}': a spectrum has one reference column; this set has {} inputs (asked row {out} of {})",
            set.name,
            set.n_in(),
            set.n_out()
        )));
    }
    let vals = set.column(out, 0);
    mean_squares(&vals, &set.freqs, kind)
}

/// Mean-square value of each line of values of the given kind; a PSD is
/// multiplied by the width of each line from the grid ([`line_widths`]).
pub fn mean_squares(
    values: &[num_complex::Complex64],
    freqs: &[f64],
    kind: SignalKind,
) -> Result<Vec<f64>> {
    mean_squares_df(values, freqs, kind, None)
}

/// As [`mean_squares`], with the PSD line width `df` (Hz) given explicitly
/// (for example an analyser's resolution) instead of taken from the grid.
/// `df` is ignored for line spectra (peak, RMS, autopower).
pub fn mean_squares_df(
    values: &[num_complex::Complex64],
    freqs: &[f64],
    kind: SignalKind,
    df: Option<f64>,
) -> Result<Vec<f64>> {
    if let Some(d) = df {
        if !(d.is_finite() && d > 0.0) {
            return Err(Error::numeric(format!(
                "PSD line width {d} Hz: expected a positive number"
            )));
        }
    }
    if values.len() != freqs.len() {
        return Err(Error::numeric(format!(
            "{} values for {} frequency lines",
            values.len(),
            freqs.len()
        )));
    }
    Ok(match kind {
        SignalKind::Peak => values.iter().map(|v| 0.5 * v.norm_sqr()).collect(),
        SignalKind::Rms => values.iter().map(|v| v.norm_sqr()).collect(),
        SignalKind::Autopower => values.iter().map(|v| v.re).collect(),
        SignalKind::Psd => {
            let w = match df {
                Some(d) => vec![d; values.len()],
                None => line_widths(freqs)?,
            };
            values.iter().zip(w).map(|(v, d)| v.re * d).collect()
        }
        SignalKind::Cross | SignalKind::Esd => {
            return Err(Error::quantity(format!(
                "{} has no mean square per line; levels are taken of peak, RMS, autopower or PSD spectra",
                kind.describe()
            )))
        }
    })
}

/// Mean-square values per band.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BandSpectrum {
    pub bands: Vec<Band>,
    /// Sum of the (weighted) mean squares of the lines in each band.
    pub mean_square: Vec<f64>,
    /// How many lines fell in each band (0: the band has no data, level −∞).
    pub lines: Vec<usize>,
    pub weighting: Weighting,
}

impl BandSpectrum {
    /// Levels in dB against `reference` (−∞ for empty bands).
    pub fn levels_db(&self, reference: f64) -> Vec<f64> {
        self.mean_square
            .iter()
            .map(|&m| db_mean_square(m, reference))
            .collect()
    }
}

/// Band mean squares of 1/b bands from per-line mean squares `ms` at `freqs`.
/// Lines at 0 Hz or below are left out (no band holds them).
pub fn band_mean_squares(
    freqs: &[f64],
    ms: &[f64],
    b: u32,
    weighting: Weighting,
) -> Result<BandSpectrum> {
    if freqs.len() != ms.len() {
        return Err(Error::numeric(format!(
            "{} mean-square values for {} frequency lines",
            ms.len(),
            freqs.len()
        )));
    }
    let pos: Vec<usize> = (0..freqs.len()).filter(|&k| freqs[k] > 0.0).collect();
    let (Some(&first), Some(&last)) = (pos.first(), pos.last()) else {
        return Err(Error::grid("no line above 0 Hz to put into bands"));
    };
    let bands = bands_covering(b, freqs[first], freqs[last])?;
    let mut sum = vec![0.0; bands.len()];
    let mut count = vec![0usize; bands.len()];
    let mut bi = 0;
    for &k in &pos {
        let f = freqs[k];
        while bi < bands.len() && f >= bands[bi].upper {
            bi += 1;
        }
        if bi < bands.len() && bands[bi].contains(f) {
            sum[bi] += ms[k] * weighting_power_factor(weighting, f);
            count[bi] += 1;
        }
    }
    Ok(BandSpectrum {
        bands,
        mean_square: sum,
        lines: count,
        weighting,
    })
}

/// Overall (weighted) mean square: the sum over all lines above 0 Hz for A
/// and C; every line for Z.
pub fn overall_mean_square(freqs: &[f64], ms: &[f64], weighting: Weighting) -> f64 {
    freqs
        .iter()
        .zip(ms)
        .map(|(&f, &m)| match weighting {
            Weighting::Z => m,
            _ if f <= 0.0 => 0.0,
            w => m * weighting_power_factor(w, f),
        })
        .sum()
}

/// Energetic sum of levels: 10·log10 Σ 10^(L/10).
pub fn sum_levels_db(levels: &[f64]) -> f64 {
    10.0 * levels
        .iter()
        .map(|l| 10f64.powf(l / 10.0))
        .sum::<f64>()
        .log10()
}

/// Levels of one spectrum row: per line, per band and overall, with the
/// reference in the label; what a plot or a table of a response shows.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SpectrumLevels {
    pub dof: String,
    /// Axis label, e.g. "dB re 1 nm/s".
    pub unit: String,
    pub weighting: Weighting,
    pub freqs: Vec<f64>,
    /// Unweighted level of each line, dB.
    pub line_db: Vec<f64>,
    pub bands: Vec<Band>,
    /// Weighted band levels, dB (−∞ for bands without lines).
    pub band_db: Vec<f64>,
    /// Weighted overall level, dB.
    pub overall_db: f64,
}

/// Levels of row `out` of spectrum `set` in 1/b bands with weighting `w`.
pub fn spectrum_levels(set: &FrfSet, out: usize, b: u32, w: Weighting) -> Result<SpectrumLevels> {
    let ms = line_mean_squares(set, out)?;
    let dof = &set.outputs[out];
    let r = reference(set.out_qty, dof.dir.is_rotational());
    let bands = band_mean_squares(&set.freqs, &ms, b, w)?;
    Ok(SpectrumLevels {
        dof: dof.to_string(),
        unit: axis_label(set.out_qty, dof.dir.is_rotational()),
        weighting: w,
        freqs: set.freqs.clone(),
        line_db: ms.iter().map(|&m| db_mean_square(m, r.value)).collect(),
        band_db: bands.levels_db(r.value),
        bands: bands.bands,
        overall_db: db_mean_square(overall_mean_square(&set.freqs, &ms, w), r.value),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn weighting_is_zero_at_1k() {
        assert!(weighting_db(Weighting::A, 1000.0).abs() < 1e-12);
        assert!(weighting_db(Weighting::C, 1000.0).abs() < 1e-12);
        assert_eq!(weighting_db(Weighting::Z, 20.0), 0.0);
    }

    #[test]
    fn edge_rule_lower_inclusive() {
        let b = Band::new(3, 0).unwrap();
        assert!(b.contains(b.lower));
        assert!(!b.contains(b.upper));
    }

    #[test]
    fn psd_needs_two_lines() {
        assert!(line_widths(&[10.0]).is_err());
        assert_eq!(line_widths(&[1.0, 2.0, 3.0]).unwrap(), vec![1.0, 1.0, 1.0]);
    }
}
