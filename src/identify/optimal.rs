//! The optimal adjustment set of Henckel, Perković & Maathuis (JRSS-B
//! 2022;84:579-599; definition from memory): among valid adjustment sets it
//! gives the smallest asymptotic variance for a wide class of estimators.
//!
//! cn(X, Y): the nodes other than X on a directed path from X to Y (the
//! descendants of X, other than X, that are ancestors of Y; Y among them).
//! forb(X, Y): the descendants of cn(X, Y), and X. Then
//! O = pa(cn(X, Y)) \ forb(X, Y). No member of O is a descendant of X (such a
//! parent would itself be in cn), so for one exposure it is a valid
//! adjustment set exactly when it meets the backdoor criterion.

use super::backdoor::is_backdoor_set;
use crate::graph::{Graph, Node, quote};

/// The optimal adjustment set O for the effect of `x` on `y`, sorted by name,
/// or the reason it cannot be used: a member is unobserved, or O does not
/// meet the backdoor criterion. When `x` is not an ancestor of `y` the graph
/// implies no effect: the answer is the empty set when adjusting for nothing
/// is valid, else an error.
pub fn optimal_set(g: &Graph, x: Node, y: Node) -> Result<Vec<Node>, String> {
    if x == y {
        return Err("the exposure and the outcome are the same node".into());
    }
    if !g.is_ancestor(x, y) {
        return if is_backdoor_set(g, x, y, &[]) {
            Ok(Vec::new())
        } else {
            Err(format!(
                "{} is not an ancestor of {}, and adjusting for nothing leaves a backdoor path open",
                quote(g.name(x)),
                quote(g.name(y))
            ))
        };
    }
    let o = optimal_members(g, x, y);
    let latent: Vec<Node> = o.iter().copied().filter(|&v| g.is_latent(v)).collect();
    if !latent.is_empty() {
        return Err(format!(
            "the optimal set includes unobserved {}",
            latent
                .iter()
                .map(|&v| quote(g.name(v)))
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    if !is_backdoor_set(g, x, y, &o) {
        return Err("the optimal set does not block every backdoor path".into());
    }
    Ok(o)
}

/// O = pa(cn) \ forb by its definition, latent members included, sorted by
/// name (for `x` an ancestor of `y`).
fn optimal_members(g: &Graph, x: Node, y: Node) -> Vec<Node> {
    let de_x = g.descendants(&[x]);
    let an_y = g.ancestors(&[y]);
    let cn: Vec<Node> = (0..g.len()).filter(|&v| v != x && de_x[v] && an_y[v]).collect();
    let mut forb = g.descendants(&cn);
    forb[x] = true;
    let mut o: Vec<Node> = cn
        .iter()
        .flat_map(|&c| g.parents(c).iter().copied())
        .filter(|&p| !forb[p])
        .collect();
    super::sort_by_name(g, &mut o);
    o.dedup();
    o
}
