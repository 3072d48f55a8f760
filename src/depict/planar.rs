//! Planarity of a molecule graph, and a drawing without crossings for a
//! planar ring system.
//!
//! Methods:
//! * Blocks (biconnected components) by the depth-first search of Hopcroft
//!   & Tarjan ("Efficient algorithms for graph manipulation", Commun. ACM
//!   1973, 16, 372-378): a graph is planar when each block is.
//! * Planarity of a block, with its faces, by the path-addition algorithm
//!   of Demoucron, Malgrange & Pertuiset ("Graphes planaires :
//!   reconnaissance et construction de représentations planaires
//!   topologiques", Revue française de recherche opérationnelle 1964, 8,
//!   33-47): start from a cycle; repeatedly take a fragment of the graph not
//!   yet drawn (an edge between drawn atoms, or a component of undrawn atoms
//!   with its attachments), list the faces whose boundary holds all its
//!   attachments, fail when a fragment fits no face, and otherwise draw a
//!   path of it across a face (a fragment that fits only one face first).
//!   Ring systems have at most a few dozen atoms, so the quadratic cost of
//!   the method does not matter and its simplicity does.
//! * The barycentric drawing of Tutte ("How to draw a graph", Proc. London
//!   Math. Soc. 1963, s3-13, 743-767): the outer face's atoms fixed on a
//!   convex (regular) polygon, every other atom at the mean of its
//!   neighbours. For a 3-connected planar graph whose outer face is a
//!   peripheral (induced, non-separating) cycle this has no crossings; the
//!   faces of a 3-connected planar graph are exactly its peripheral cycles
//!   (Tutte, same paper), so any face found above will do. The largest is
//!   taken, to spread the atoms. Blocks that are only 2-connected (e.g.
//!   bicyclo[1.1.1]pentane) draw without crossings too, but a part hanging
//!   between two atoms may lie on the straight line between them; the
//!   relaxation of `layout` then bends it.

use super::geom::Point;
use crate::chem::Molecule;
use std::f64::consts::PI;

/// The blocks of a graph (n vertices, adjacency lists): each block as its
/// edge list (u, v). Bridges are blocks of one edge.
pub fn blocks(adj: &[Vec<usize>]) -> Vec<Vec<(usize, usize)>> {
    let n = adj.len();
    let mut disc = vec![usize::MAX; n];
    let mut low = vec![0; n];
    let mut time = 0;
    let mut out = Vec::new();
    let mut edges: Vec<(usize, usize)> = Vec::new();
    for root in 0..n {
        if disc[root] != usize::MAX {
            continue;
        }
        disc[root] = time;
        low[root] = time;
        time += 1;
        // Iterative depth-first search: (vertex, parent, next neighbour).
        let mut stack: Vec<(usize, usize, usize)> = vec![(root, usize::MAX, 0)];
        while let Some(&mut (v, parent, ref mut next)) = stack.last_mut() {
            if *next < adj[v].len() {
                let w = adj[v][*next];
                *next += 1;
                if disc[w] == usize::MAX {
                    edges.push((v, w));
                    disc[w] = time;
                    low[w] = time;
                    time += 1;
                    stack.push((w, v, 0));
                } else if w != parent && disc[w] < disc[v] {
                    edges.push((v, w));
                    low[v] = low[v].min(disc[w]);
                }
            } else {
                stack.pop();
                if let Some(&(u, _, _)) = stack.last() {
                    low[u] = low[u].min(low[v]);
                    if low[v] >= disc[u] {
                        // u separates v's subtree: pop its block.
                        let mut block = Vec::new();
                        while let Some(e) = edges.pop() {
                            block.push(e);
                            if e == (u, v) {
                                break;
                            }
                        }
                        out.push(block);
                    }
                }
            }
        }
    }
    out
}

/// Whether the graph is planar (every block planar).
pub fn is_planar(adj: &[Vec<usize>]) -> bool {
    blocks(adj).iter().all(|block| {
        if block.len() < 9 {
            // Fewer than nine edges: no subdivision of K5 (10 edges) or
            // K3,3 (9 edges) fits, so planar by Kuratowski's theorem.
            return true;
        }
        let (local, _) = block_graph(block);
        faces(&local).is_some()
    })
}

/// Whether a molecule's graph is planar.
pub fn molecule_is_planar(mol: &Molecule) -> bool {
    let adj: Vec<Vec<usize>> = (0..mol.atom_count())
        .map(|i| mol.neighbours(i).map(|(j, _)| j).collect())
        .collect();
    is_planar(&adj)
}

/// A block's edges as a graph of its own: adjacency lists over local
/// numbers, and the original vertex of each local one.
pub fn block_graph(block: &[(usize, usize)]) -> (Vec<Vec<usize>>, Vec<usize>) {
    let mut verts: Vec<usize> = block.iter().flat_map(|&(u, v)| [u, v]).collect();
    verts.sort_unstable();
    verts.dedup();
    let index = |x: usize| verts.binary_search(&x).unwrap_or(0);
    let mut adj = vec![Vec::new(); verts.len()];
    for &(u, v) in block {
        let (a, b) = (index(u), index(v));
        if !adj[a].contains(&b) {
            adj[a].push(b);
            adj[b].push(a);
        }
    }
    (adj, verts)
}

/// The faces of a planar drawing of a 2-connected graph (each a cycle of
/// vertices), or None when the graph is not planar (or not 2-connected).
pub fn faces(adj: &[Vec<usize>]) -> Option<Vec<Vec<usize>>> {
    let n = adj.len();
    let cycle = find_cycle(adj)?;
    let mut drawn = vec![false; n];
    let mut drawn_edge = vec![vec![false; n]; n];
    let mark = |path: &[usize], drawn: &mut Vec<bool>, de: &mut Vec<Vec<bool>>| {
        for &v in path {
            drawn[v] = true;
        }
        for w in path.windows(2) {
            de[w[0]][w[1]] = true;
            de[w[1]][w[0]] = true;
        }
    };
    let mut closed = cycle.clone();
    closed.push(cycle[0]);
    mark(&closed, &mut drawn, &mut drawn_edge);
    let mut faces = vec![cycle.clone(), cycle];
    loop {
        let frags = fragments(adj, &drawn, &drawn_edge);
        if frags.is_empty() {
            break;
        }
        // Faces that can take each fragment.
        let mut choice: Option<(usize, usize, usize)> = None; // (count, fragment, face)
        for (k, f) in frags.iter().enumerate() {
            let fits: Vec<usize> = (0..faces.len())
                .filter(|&x| f.contacts.iter().all(|c| faces[x].contains(c)))
                .collect();
            if fits.is_empty() {
                return None;
            }
            if choice.is_none_or(|c| fits.len() < c.0) {
                choice = Some((fits.len(), k, fits[0]));
            }
        }
        let (_, k, x) = choice?;
        let path = frags[k].path(adj, &drawn)?;
        mark(&path, &mut drawn, &mut drawn_edge);
        // Split face x along the path a .. b.
        let face = faces.swap_remove(x);
        let (a, b) = (path[0], path[path.len() - 1]);
        let ia = face.iter().position(|&v| v == a)?;
        let ib = face.iter().position(|&v| v == b)?;
        let walk = |from: usize, to: usize| {
            let mut w = Vec::new();
            let mut i = from;
            loop {
                w.push(face[i]);
                if i == to {
                    break;
                }
                i = (i + 1) % face.len();
            }
            w
        };
        let inner = &path[1..path.len() - 1];
        let mut f1 = walk(ia, ib);
        f1.extend(inner.iter().rev());
        let mut f2 = walk(ib, ia);
        f2.extend(inner.iter());
        faces.push(f1);
        faces.push(f2);
    }
    Some(faces)
}

/// A part of the graph not yet drawn: one edge between drawn vertices, or
/// a connected set of undrawn vertices; `contacts` are the drawn vertices
/// it attaches to.
struct Fragment {
    inside: Vec<usize>,
    contacts: Vec<usize>,
}

impl Fragment {
    /// A path through the fragment between two different contacts.
    fn path(&self, adj: &[Vec<usize>], drawn: &[bool]) -> Option<Vec<usize>> {
        if self.inside.is_empty() {
            return Some(self.contacts.clone());
        }
        let a = self.contacts[0];
        let n = adj.len();
        let mut parent = vec![usize::MAX; n];
        let mut queue = std::collections::VecDeque::new();
        for &x in &adj[a] {
            if !drawn[x] && parent[x] == usize::MAX {
                parent[x] = a;
                queue.push_back(x);
            }
        }
        while let Some(x) = queue.pop_front() {
            if let Some(&b) = adj[x].iter().find(|&&b| drawn[b] && b != a) {
                let mut path = vec![b, x];
                let mut y = x;
                while parent[y] != a {
                    y = parent[y];
                    path.push(y);
                }
                path.push(a);
                path.reverse();
                return Some(path);
            }
            for &y in &adj[x] {
                if !drawn[y] && parent[y] == usize::MAX {
                    parent[y] = x;
                    queue.push_back(y);
                }
            }
        }
        None
    }
}

fn fragments(adj: &[Vec<usize>], drawn: &[bool], drawn_edge: &[Vec<bool>]) -> Vec<Fragment> {
    let n = adj.len();
    let mut out = Vec::new();
    for u in 0..n {
        for &v in &adj[u] {
            if u < v && drawn[u] && drawn[v] && !drawn_edge[u][v] {
                out.push(Fragment {
                    inside: Vec::new(),
                    contacts: vec![u, v],
                });
            }
        }
    }
    let mut seen = vec![false; n];
    for s in 0..n {
        if drawn[s] || seen[s] {
            continue;
        }
        seen[s] = true;
        let mut inside = vec![s];
        let mut contacts = Vec::new();
        let mut k = 0;
        while k < inside.len() {
            let x = inside[k];
            k += 1;
            for &y in &adj[x] {
                if drawn[y] {
                    if !contacts.contains(&y) {
                        contacts.push(y);
                    }
                } else if !seen[y] {
                    seen[y] = true;
                    inside.push(y);
                }
            }
        }
        out.push(Fragment { inside, contacts });
    }
    out
}

/// Some cycle of the graph (vertex list): the first edge outside a
/// breadth-first tree closes one through the two ends' common ancestor.
fn find_cycle(adj: &[Vec<usize>]) -> Option<Vec<usize>> {
    let n = adj.len();
    let mut parent = vec![usize::MAX; n];
    let mut seen = vec![false; n];
    for root in 0..n {
        if seen[root] {
            continue;
        }
        seen[root] = true;
        let mut queue = std::collections::VecDeque::from([root]);
        while let Some(v) = queue.pop_front() {
            for &w in &adj[v] {
                if !seen[w] {
                    seen[w] = true;
                    parent[w] = v;
                    queue.push_back(w);
                } else if w != parent[v] && parent[w] != v {
                    let up = |mut x: usize| {
                        let mut p = vec![x];
                        while parent[x] != usize::MAX {
                            x = parent[x];
                            p.push(x);
                        }
                        p
                    };
                    let (pv, pw) = (up(v), up(w));
                    let lca = *pv.iter().find(|x| pw.contains(x))?;
                    let mut cyc: Vec<usize> =
                        pv.iter().take_while(|&&x| x != lca).copied().collect();
                    cyc.push(lca);
                    let back: Vec<usize> = pw.iter().take_while(|&&x| x != lca).copied().collect();
                    cyc.extend(back.into_iter().rev());
                    return Some(cyc);
                }
            }
        }
    }
    None
}

/// Tutte's barycentric drawing: `outer` on a regular polygon of side 1,
/// every other vertex at the mean of its neighbours (Gauss-Seidel to
/// convergence; the system is irreducibly diagonally dominant for a
/// connected graph with a fixed vertex, so it converges).
pub fn barycentric(adj: &[Vec<usize>], outer: &[usize]) -> Vec<Point> {
    let n = adj.len();
    let k = outer.len() as f64;
    let rad = 1.0 / (2.0 * (PI / k).sin());
    let mut pos = vec![[0.0, 0.0]; n];
    let mut fixed = vec![false; n];
    for (i, &v) in outer.iter().enumerate() {
        let t = PI / 2.0 + 2.0 * PI * i as f64 / k;
        pos[v] = [rad * t.cos(), rad * t.sin()];
        fixed[v] = true;
    }
    for _ in 0..20000 {
        let mut change: f64 = 0.0;
        for v in 0..n {
            if fixed[v] || adj[v].is_empty() {
                continue;
            }
            let mut s = [0.0, 0.0];
            for &w in &adj[v] {
                s[0] += pos[w][0];
                s[1] += pos[w][1];
            }
            let d = adj[v].len() as f64;
            let p = [s[0] / d, s[1] / d];
            change = change.max((p[0] - pos[v][0]).abs() + (p[1] - pos[v][1]).abs());
            pos[v] = p;
        }
        if change < 1e-13 {
            break;
        }
    }
    pos
}

#[cfg(test)]
mod tests {
    use super::*;

    fn graph(n: usize, edges: &[(usize, usize)]) -> Vec<Vec<usize>> {
        let mut adj = vec![Vec::new(); n];
        for &(u, v) in edges {
            adj[u].push(v);
            adj[v].push(u);
        }
        adj
    }

    fn complete(n: usize) -> Vec<(usize, usize)> {
        (0..n)
            .flat_map(|u| (u + 1..n).map(move |v| (u, v)))
            .collect()
    }

    // Kuratowski's theorem (1930): K5 and K3,3 are not planar; K4, the
    // triangular prism, the cube and K2,n are (common practice).
    #[test]
    fn kuratowski_graphs_are_not_planar() {
        assert!(!is_planar(&graph(5, &complete(5))));
        let k33: Vec<(usize, usize)> = (0..3).flat_map(|u| (3..6).map(move |v| (u, v))).collect();
        assert!(!is_planar(&graph(6, &k33)));
        // K3,3 with one edge subdivided is still not planar.
        let mut sub = k33.clone();
        sub.retain(|&e| e != (0, 3));
        sub.extend([(0, 6), (6, 3)]);
        assert!(!is_planar(&graph(7, &sub)));
        assert!(is_planar(&graph(4, &complete(4))));
        let prism = [
            (0, 1),
            (1, 2),
            (2, 0),
            (3, 4),
            (4, 5),
            (5, 3),
            (0, 3),
            (1, 4),
            (2, 5),
        ];
        assert!(is_planar(&graph(6, &prism)));
        // The cube: two squares 0-3 and 4-7 and the four edges joining them.
        let cube: Vec<(usize, usize)> = (0..4)
            .flat_map(|i| [(i, (i + 1) % 4), (4 + i, 4 + (i + 1) % 4), (i, i + 4)])
            .collect();
        let f = faces(&graph(8, &cube)).unwrap();
        // Euler's formula: F = E - V + 2 = 12 - 8 + 2 = 6 faces, all squares.
        assert_eq!(f.len(), 6);
        assert!(f.iter().all(|x| x.len() == 4));
        let k25: Vec<(usize, usize)> = (0..2).flat_map(|u| (2..7).map(move |v| (u, v))).collect();
        assert!(is_planar(&graph(7, &k25)));
    }

    // Two triangles joined at a vertex: two blocks; a chain: one block per
    // bond.
    #[test]
    fn blocks_split_at_cut_vertices() {
        let bowtie = graph(5, &[(0, 1), (1, 2), (2, 0), (2, 3), (3, 4), (4, 2)]);
        let mut sizes: Vec<usize> = blocks(&bowtie).iter().map(|b| b.len()).collect();
        sizes.sort_unstable();
        assert_eq!(sizes, vec![3, 3]);
        assert_eq!(blocks(&graph(4, &[(0, 1), (1, 2), (2, 3)])).len(), 3);
    }
}
