//! The dependency graph: topological order, cycle extraction, and the set
//! of nodes affected by a change. Nodes are indices; `deps[i]` lists the
//! nodes that node `i` reads.

/// Order the nodes so that each comes after everything it depends on.
/// Stable: among ready nodes, file order is kept. On a cycle, returns one
/// cycle as a list of nodes `a, b, c` meaning a uses b uses c uses a.
pub fn topo_order(deps: &[Vec<usize>]) -> Result<Vec<usize>, Vec<usize>> {
    let n = deps.len();
    let mut indegree = vec![0usize; n];
    let mut users: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (i, ds) in deps.iter().enumerate() {
        for &d in ds {
            indegree[i] += 1;
            users[d].push(i);
        }
    }
    // Kahn's algorithm with a min-heap on index keeps file order among
    // independent nodes, which makes reports and error order predictable.
    let mut ready: std::collections::BinaryHeap<std::cmp::Reverse<usize>> = (0..n)
        .filter(|&i| indegree[i] == 0)
        .map(std::cmp::Reverse)
        .collect();
    let mut order = Vec::with_capacity(n);
    while let Some(std::cmp::Reverse(i)) = ready.pop() {
        order.push(i);
        for &u in &users[i] {
            indegree[u] -= 1;
            if indegree[u] == 0 {
                ready.push(std::cmp::Reverse(u));
            }
        }
    }
    if order.len() == n {
        return Ok(order);
    }
    // Some nodes remain: walk dependencies among them until one repeats.
    let start = (0..n).find(|&i| indegree[i] > 0).unwrap_or(0);
    let mut seen = vec![usize::MAX; n];
    let mut path = Vec::new();
    let mut cur = start;
    loop {
        if seen[cur] != usize::MAX {
            return Err(path[seen[cur]..].to_vec());
        }
        seen[cur] = path.len();
        path.push(cur);
        match deps[cur].iter().find(|&&d| indegree[d] > 0) {
            Some(&d) => cur = d,
            None => return Err(path),
        }
    }
}

/// Reverse edges: `users[i]` lists the nodes that read node `i`, given
/// each node's dependencies in node order.
pub fn users<'a>(deps: impl ExactSizeIterator<Item = &'a [usize]>) -> Vec<Vec<usize>> {
    let mut users = vec![Vec::new(); deps.len()];
    for (i, ds) in deps.enumerate() {
        for &d in ds {
            users[d].push(i);
        }
    }
    users
}

/// Mark `changed` and everything downstream of it in `dirty`.
pub fn mark_downstream(users: &[Vec<usize>], changed: usize, dirty: &mut [bool]) {
    let mut stack = vec![changed];
    while let Some(i) = stack.pop() {
        if dirty[i] {
            continue;
        }
        dirty[i] = true;
        stack.extend(users[i].iter().copied().filter(|&u| !dirty[u]));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn orders_any_order_definitions() {
        // 0 uses 2, 2 uses 1
        let deps = vec![vec![2], vec![], vec![1]];
        assert_eq!(topo_order(&deps).unwrap(), vec![1, 2, 0]);
    }

    #[test]
    fn finds_a_cycle() {
        // 0 -> 1 -> 2 -> 0, 3 independent
        let deps = vec![vec![1], vec![2], vec![0], vec![]];
        let c = topo_order(&deps).unwrap_err();
        assert_eq!(c.len(), 3);
        for w in 0..3 {
            assert!(deps[c[w]].contains(&c[(w + 1) % 3]));
        }
    }

    #[test]
    fn self_cycle() {
        let deps = vec![vec![0]];
        assert_eq!(topo_order(&deps).unwrap_err(), vec![0]);
    }

    #[test]
    fn downstream_only() {
        // 1 uses 0, 2 uses 1, 3 uses nothing
        let deps = [vec![], vec![0], vec![1], vec![]];
        let u = users(deps.iter().map(Vec::as_slice));
        let mut dirty = vec![false; 4];
        mark_downstream(&u, 1, &mut dirty);
        assert_eq!(dirty, vec![false, true, true, false]);
    }
}
