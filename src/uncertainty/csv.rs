//! A result's uncertainty and reliability as text: our own layout, beside
//! the result's CSV (`NAME.uncertainty.csv`).
//!
//! ```text
//! # mortise-uncertainty 1
//! # set: coupled
//! # method: first-order propagation ...
//! # u: standard uncertainty of each complex value (u² = E|δH|², the set's SI unit)
//! # flag: 0 reliable; else the sum of 1 below the input noise, 2 cancellation, ...
//! freq_Hz,u A:1+X/A:1+X,...,flag A:1+X/A:1+X,...
//! 1,0.0123,...,9,...
//! ```
//! One row per line; columns entry by entry (outputs, then inputs within
//! each output) as in our FRF CSV; missing entries are left out. Numbers in
//! their shortest exact form.

use super::model::FrfUncertainty;
use super::reliability::{
    reasons, Reliability, BELOW_NOISE, CANCELLATION, ILL_CONDITIONED, INPUT_NOISE, UNCERTAIN,
};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use std::fmt::Write;

/// The text of `NAME.uncertainty.csv` for `set`.
pub fn to_csv(set: &FrfSet, u: &FrfUncertainty, r: &Reliability) -> Result<String> {
    u.check_fits(set)?;
    if r.flags.len() != set.data.len() {
        return Err(Error::numeric(format!(
            "'{}': {} reliability flags for {} values",
            set.name,
            r.flags.len(),
            set.data.len()
        )));
    }
    let one_line = |t: &str| t.replace(['\n', '\r'], " ");
    let mut s = String::from("# mortise-uncertainty 1\n");
    let _ = writeln!(s, "# set: {}", one_line(&set.name));
    let _ = writeln!(s, "# method: {}", one_line(&u.method));
    s.push_str("# u: standard uncertainty of each complex value (u² = E|δH|², in the set's SI unit; circular: real and imaginary parts u/√2 each)\n");
    let bits: Vec<String> = [
        BELOW_NOISE,
        CANCELLATION,
        ILL_CONDITIONED,
        INPUT_NOISE,
        UNCERTAIN,
    ]
    .iter()
    .map(|&b| format!("{b} {}", reasons(b).join("")))
    .collect();
    let _ = writeln!(s, "# flag: 0 reliable; else the sum of {}", bits.join(", "));
    let entries: Vec<(usize, usize)> = (0..set.n_out())
        .flat_map(|i| (0..set.n_in()).map(move |j| (i, j)))
        .filter(|&(i, j)| set.is_present(i, j))
        .collect();
    s.push_str("freq_Hz");
    for prefix in ["u", "flag"] {
        for &(i, j) in &entries {
            let _ = write!(s, ",{prefix} {}/{}", set.outputs[i], set.inputs[j]);
        }
    }
    s.push('\n');
    for k in 0..set.n_lines() {
        let _ = write!(s, "{}", set.freqs[k]);
        for &(i, j) in &entries {
            let _ = write!(s, ",{}", u.std[set.idx(k, i, j)]);
        }
        for &(i, j) in &entries {
            let _ = write!(s, ",{}", r.flags[set.idx(k, i, j)]);
        }
        s.push('\n');
    }
    Ok(s)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;
    use crate::uncertainty::reliability::{assess, Evidence, ReliabilityOptions};
    use crate::units::Quantity;
    use num_complex::Complex64;

    #[test]
    fn header_columns_and_rows() {
        let d = Dof::parse("a:1+Z", "").unwrap();
        let mut s = FrfSet::zeros(
            "r",
            vec![10.0, 20.5],
            vec![d.clone()],
            vec![d],
            Quantity::Acceleration,
            Quantity::Force,
        );
        s.data = vec![Complex64::new(1.0, 0.0), Complex64::new(0.1, 0.0)];
        let u = FrfUncertainty {
            std: vec![0.01, 0.1],
            method: "given".into(),
        };
        let r = assess(
            &s,
            &Evidence {
                std: Some(&u.std),
                ..Evidence::default()
            },
            &ReliabilityOptions::default(),
        );
        let t = to_csv(&s, &u, &r).unwrap();
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines[0], "# mortise-uncertainty 1");
        assert!(lines[4].contains("1 below the input noise"), "{}", lines[4]);
        assert_eq!(lines[5], "freq_Hz,u a:1+Z/a:1+Z,flag a:1+Z/a:1+Z");
        assert_eq!(lines[6], "10,0.01,0");
        assert_eq!(lines[7], "20.5,0.1,1");
    }
}
