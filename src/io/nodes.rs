//! Node numbering for export to formats whose nodes are integers (UFF).
//!
//! Suppliers label DOFs as they like (`wall:a1+X`); UFF needs integer nodes.
//! [`numbered`] gives every non-numeric node a number above the largest
//! numeric node of the sets, in order of first appearance, and returns the
//! map so the report can say which number stands for which label. UFF has no
//! component namespace, so a numeric node that a second component also uses
//! (`A:1+Z` and `B:1+Z` in a coupled result) is renumbered the same way: the
//! component that uses the number first keeps it.
//!
//! [`super::export`] applies it to every UFF export of `mortise run` and of
//! the page, so both faces write the same numbers for the same sets.

use crate::frf::FrfSet;
use std::collections::BTreeMap;

/// One renumbered node: (component, original node text, number written).
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct NodeNumber {
    pub component: String,
    pub node: String,
    pub number: u64,
}

/// Copies of `sets` whose nodes are all integers, and the renumbering used
/// (empty when every node was already a number).
pub fn numbered(sets: &[FrfSet]) -> (Vec<FrfSet>, Vec<NodeNumber>) {
    let mut max = 0u64;
    for s in sets {
        for d in s.outputs.iter().chain(&s.inputs) {
            if let Ok(n) = d.node.trim().parse::<u64>() {
                max = max.max(n);
            }
        }
    }
    // which component uses each numeric node first: it keeps the number
    let mut owner: BTreeMap<u64, String> = BTreeMap::new();
    for s in sets {
        for d in s.outputs.iter().chain(&s.inputs) {
            if let Ok(n) = d.node.trim().parse::<u64>() {
                owner.entry(n).or_insert_with(|| d.component.clone());
            }
        }
    }
    let mut map: BTreeMap<(String, String), u64> = BTreeMap::new();
    let mut order = Vec::new();
    // numbers above the largest; when that is u64::MAX (a node label of
    // twenty digits), the free numbers from 1 up
    let mut next = max.checked_add(1).unwrap_or(1);
    let mut fresh = || loop {
        let n = next;
        next = next.checked_add(1).unwrap_or(1);
        if !owner.contains_key(&n) {
            return n;
        }
    };
    let mut out = sets.to_vec();
    for s in &mut out {
        for d in s.outputs.iter_mut().chain(s.inputs.iter_mut()) {
            // the reference input of a spectrum keeps its name
            if d.node == "ref" && d.component.is_empty() {
                continue;
            }
            if let Ok(n) = d.node.trim().parse::<u64>() {
                if owner.get(&n) == Some(&d.component) {
                    continue;
                }
            }
            let key = (d.component.clone(), d.node.clone());
            let n = *map.entry(key.clone()).or_insert_with(|| {
                let n = fresh();
                order.push(NodeNumber {
                    component: key.0.clone(),
                    node: key.1.clone(),
                    number: n,
                });
                n
            });
            d.node = n.to_string();
        }
    }
    (out, order)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Direction, Dof};
    use crate::units::Quantity;

    #[test]
    fn text_nodes_get_numbers_above_numeric_ones() {
        let s = FrfSet::zeros(
            "x",
            vec![1.0],
            vec![
                Dof::new("wall", "a1", Direction::X),
                Dof::new("wall", "7", Direction::X),
            ],
            vec![
                Dof::new("wall", "a1", Direction::X),
                Dof::scalar("room", "bed"),
            ],
            Quantity::Velocity,
            Quantity::Force,
        );
        let (o, map) = numbered(&[s]);
        assert_eq!(o[0].outputs[0].node, "8");
        assert_eq!(o[0].inputs[0].node, "8");
        assert_eq!(o[0].inputs[1].node, "9");
        assert_eq!(map.len(), 2);
        assert_eq!(
            map[1],
            NodeNumber {
                component: "room".into(),
                node: "bed".into(),
                number: 9
            }
        );
    }

    #[test]
    fn a_node_number_used_by_two_components_is_split() {
        // a coupled result lists A:1+Z and B:1+Z; UFF would merge them
        let dofs = vec![
            Dof::new("A", "1", Direction::Z),
            Dof::new("A", "2", Direction::Z),
            Dof::new("B", "1", Direction::Z),
        ];
        let s = FrfSet::zeros(
            "ab",
            vec![1.0],
            dofs.clone(),
            dofs,
            Quantity::Displacement,
            Quantity::Force,
        );
        let (o, map) = numbered(&[s]);
        let nodes: Vec<&str> = o[0].outputs.iter().map(|d| d.node.as_str()).collect();
        assert_eq!(nodes, ["1", "2", "3"]);
        assert_eq!(o[0].inputs[2].node, "3");
        assert_eq!(
            map,
            vec![NodeNumber {
                component: "B".into(),
                node: "1".into(),
                number: 3
            }]
        );
        crate::io::uff58::write(&o, false).unwrap();
    }

    #[test]
    fn a_largest_node_of_u64_max_does_not_overflow() {
        // robustness: a node label "18446744073709551615" (u64::MAX) used to
        // make `max + 1` overflow (a panic with overflow checks); the text
        // node then takes the lowest free number
        let s = FrfSet::zeros(
            "x",
            vec![1.0],
            vec![
                Dof::new("w", &u64::MAX.to_string(), Direction::X),
                Dof::new("w", "1", Direction::X),
                Dof::new("w", "a", Direction::X),
                Dof::new("w", "b", Direction::X),
            ],
            vec![Dof::new("w", "1", Direction::X)],
            Quantity::Velocity,
            Quantity::Force,
        );
        let (o, map) = numbered(&[s]);
        let nodes: Vec<&str> = o[0].outputs.iter().map(|d| d.node.as_str()).collect();
        assert_eq!(nodes, [u64::MAX.to_string().as_str(), "1", "2", "3"]);
        assert_eq!(map.len(), 2);
    }
}
