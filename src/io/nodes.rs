//! Node numbering for export to formats whose nodes are integers (UFF).
//!
//! Suppliers label DOFs as they like (`wall:a1+X`); UFF needs integer nodes.
//! [`numbered`] gives every non-numeric node a number above the largest
//! numeric node of the sets, in order of first appearance, and returns the
//! map so the report can say which number stands for which label.

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
    let is_num = |n: &str| n.trim().parse::<u64>().is_ok();
    let mut max = 0u64;
    for s in sets {
        for d in s.outputs.iter().chain(&s.inputs) {
            if let Ok(n) = d.node.trim().parse::<u64>() {
                max = max.max(n);
            }
        }
    }
    let mut map: BTreeMap<(String, String), u64> = BTreeMap::new();
    let mut order = Vec::new();
    let mut next = max + 1;
    let mut out = sets.to_vec();
    for s in &mut out {
        for d in s.outputs.iter_mut().chain(s.inputs.iter_mut()) {
            // the reference input of a spectrum keeps its name
            if d.node == "ref" && d.component.is_empty() {
                continue;
            }
            if is_num(&d.node) {
                continue;
            }
            let key = (d.component.clone(), d.node.clone());
            let n = *map.entry(key.clone()).or_insert_with(|| {
                let n = next;
                next += 1;
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
}
