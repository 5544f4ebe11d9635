//! Isolator dynamic stiffness: a hysteretic spring k(1 + iη) (textbook
//! structural-damping model) and its use as a 1×1 or two-port set.

#![allow(clippy::needless_range_loop)]

use mortise::synth::{Isolator, Link, Mass, Network, StiffnessPoint};
use mortise::{Direction, Dof, FrfKind};
use num_complex::Complex64;

#[test]
fn constant_isolator_inverts_to_a_grounded_spring() {
    // receptance of a spring to ground: 1/(k(1 + iη)) (textbook)
    let (k, eta) = (1.5e5, 0.1);
    let iso = Isolator::constant("iso", Dof::new("iso", "1", Direction::Z), k, eta);
    let freqs = [10.0, 100.0, 1000.0];
    let z = iso.stiffness(&freqs).unwrap();
    assert_eq!(z.kind(), FrfKind::DynamicStiffness);
    let h = z.to_kind("receptance").unwrap();
    let net = Network {
        component: "iso".into(),
        dir: Direction::Z,
        masses: vec![Mass {
            node: "1".into(),
            mass: 0.0,
            dir: None,
        }],
        links: vec![Link {
            a: "1".into(),
            b: None,
            k,
            c: 0.0,
            eta,
        }],
    };
    let hn = net.receptance(&freqs, &[], &[]).unwrap();
    for l in 0..3 {
        let want = 1.0 / Complex64::new(k, k * eta);
        assert!((h.get(l, 0, 0) - want).norm() < 1e-12 * want.norm());
        assert!((hn.get(l, 0, 0) - want).norm() < 1e-12 * want.norm());
        // passivity of a dynamic stiffness: Im K ≥ 0 with e^{+iωt}
        assert!(z.get(l, 0, 0).im >= 0.0);
    }
}

#[test]
fn two_isolators_in_parallel_double_the_stiffness() {
    // elements sharing one motion add impedances (textbook; common practice):
    // two-port rows sum to zero (massless element, force balance)
    let iso = Isolator {
        name: "iso".into(),
        dof: Dof::new("iso", "1", Direction::Z),
        table: vec![
            StiffnessPoint {
                freq: 10.0,
                k: 1.2e5,
                eta: 0.08,
            },
            StiffnessPoint {
                freq: 1000.0,
                k: 2.4e5,
                eta: 0.14,
            },
        ],
    };
    let soft = iso.scaled("soft", 0.5).unwrap();
    let freqs = [10.0, 31.6, 400.0, 1000.0];
    let a = iso
        .two_port(
            &freqs,
            Dof::new("iso", "top", Direction::Z),
            Dof::new("iso", "bot", Direction::Z),
        )
        .unwrap();
    let s = soft.stiffness(&freqs).unwrap();
    let one = iso.stiffness(&freqs).unwrap();
    for l in 0..freqs.len() {
        assert!((a.get(l, 0, 0) + a.get(l, 0, 1)).norm() < 1e-9);
        assert!((s.get(l, 0, 0) * 2.0 - one.get(l, 0, 0)).norm() < 1e-9 * one.get(l, 0, 0).norm());
    }
    assert!(iso
        .stiffness(&[2000.0])
        .unwrap_err()
        .message
        .contains("not extrapolated"));
}
