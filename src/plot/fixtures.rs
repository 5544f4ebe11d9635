//! Test data and checks shared by the plot modules' unit tests: a
//! single-DOF receptance, a one-curve spec, an SVG well-formedness check
//! and the WCAG 2.1 contrast ratio.

use super::spec::PlotSpec;
use crate::frf::{Direction, Dof, FrfSet};
use crate::units::Quantity;
use num_complex::Complex64;
use std::collections::BTreeMap;

pub(super) fn sdof() -> BTreeMap<String, FrfSet> {
    // Receptance of m = 1 kg, k = 1e4 N/m, c = 2 N·s/m: 1/(k − ω²m + iωc).
    let d = Dof::new("demo", "1", Direction::Z);
    let freqs: Vec<f64> = (1..=400).map(|i| i as f64 * 0.5).collect();
    let mut h = FrfSet::zeros(
        "sdof",
        freqs,
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..h.n_lines() {
        let w = h.omega(l);
        h.set(l, 0, 0, 1.0 / Complex64::new(1e4 - w * w, 2.0 * w));
    }
    let mut m = BTreeMap::new();
    m.insert("a".to_string(), h);
    m
}

pub(super) fn spec(kind: &str) -> PlotSpec {
    PlotSpec::from_json(&format!(
        r#"{{"kind":"{kind}","series":[{{"set":"a","out":0,"in":0}}],"title":"t"}}"#
    ))
    .unwrap()
}

/// A small well-formedness check: tags nest and close, every `&` starts
/// one of the five entities we write, attribute values hold no `<`, and
/// no character XML 1.0 refuses appears, and only the elements the
/// core's SVG drawings use. (tests/cli_diagram.rs parses
/// the same kind of output with Python's xml.etree.)
pub(super) fn well_formed(svg: &str) {
    for c in svg.chars() {
        let u = c as u32;
        assert!(
            !(u < 0x20 || u == 0xFFFE || u == 0xFFFF),
            "character U+{u:04X} in the SVG"
        );
    }
    let mut stack: Vec<String> = Vec::new();
    let b = svg.as_bytes();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'<' => {
                let end = i + svg[i..].find('>').expect("tag closed");
                let tag = &svg[i + 1..end];
                if let Some(name) = tag.strip_prefix('/') {
                    assert_eq!(stack.pop().as_deref(), Some(name), "close of {name}");
                } else {
                    let name: String = tag
                        .chars()
                        .take_while(|c| c.is_ascii_alphanumeric())
                        .collect();
                    assert!(
                        [
                            "svg", "g", "rect", "text", "title", "desc", "path", "line", "circle",
                            "polyline", "polygon"
                        ]
                        .contains(&name.as_str()),
                        "unexpected element <{name}"
                    );
                    // attribute values: name="...", nothing unescaped inside
                    let attrs = &tag[name.len()..];
                    assert_eq!(attrs.matches('"').count() % 2, 0, "{tag}");
                    assert!(!attrs.contains('<'), "{tag}");
                    if !tag.ends_with('/') {
                        stack.push(name);
                    }
                }
                i = end + 1;
            }
            b'&' => {
                let ok = ["&amp;", "&lt;", "&gt;", "&quot;", "&#39;"]
                    .iter()
                    .any(|e| svg[i..].starts_with(e));
                assert!(ok, "bare & at byte {i}: {}", &svg[i..(i + 12).min(b.len())]);
                i += 1;
            }
            b'>' => panic!("bare > at byte {i}"),
            _ => i += 1,
        }
    }
    assert!(stack.is_empty(), "unclosed {stack:?}");
}

/// WCAG 2.1 contrast ratio of two "#rrggbb" colours (relative luminance
/// and ratio as defined in WCAG 2.1, success criterion 1.4.3).
pub(super) fn contrast(a: &str, b: &str) -> f64 {
    let lum = |h: &str| {
        let c = |i: usize| {
            let v = f64::from(u8::from_str_radix(&h[i..i + 2], 16).unwrap()) / 255.0;
            if v <= 0.03928 {
                v / 12.92
            } else {
                ((v + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * c(1) + 0.7152 * c(3) + 0.0722 * c(5)
    };
    let (x, y) = (lum(a), lum(b));
    (x.max(y) + 0.05) / (x.min(y) + 0.05)
}
