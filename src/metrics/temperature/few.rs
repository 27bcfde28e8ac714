//! Exact packing when one side has very few members (issue 10, item 9): a
//! `1 x 100,000` or `5 x 5,000` table, where the assignment over the large
//! side of the alternating search would need a `K x K` table.
//!
//! Every order of the small side (`k!` of them, `k <= 5`) is tried. For a
//! fixed small-side order, the cost of placing a large-side member at
//! position `t` depends only on its *pattern*, the set of small-side
//! members it holds: `w(p, t) = sum_{s in p} d(pos(s), t)` (presence minus
//! absence unexpectedness at that cell; the absence part of `T` is the same
//! for every order). Members with equal patterns are interchangeable, so
//! the best large-side order is a transportation problem: `C` patterns
//! with supplies `n_p` (how many members have pattern `p`), `K` positions
//! each taking one member, cost `w(p, t)`.
//!
//! It is solved exactly by successive shortest paths (Ford & Fulkerson
//! 1962, *Flows in Networks*; with node potentials so that Dijkstra's
//! method applies, Edmonds & Karp 1972, J. ACM 19:248-264): positions are
//! added one at a time; the new position is reached from a pattern with
//! supply left along the cheapest chain of moves "pattern `a` takes a
//! position `t'` from pattern `b`" (cost `w(a, t') - w(b, t')`), the
//! cheapest such move for each pair `(a, b)` kept in a heap. Each step
//! costs `O(C^2)` plus `O(C log K)` per move on the chain, so a small-side
//! order costs `O(K C^2 log K)` and the whole search `O(k! K C^2 log K)`
//! ([`few_members_applies`] bounds `k! K C^2`). Each step keeps the
//! assignment optimal for the positions added so far (the standard
//! invariant of successive shortest paths), so the last one is optimal;
//! with the best small-side order this is the global minimum of `T` over
//! all row and column orders (up to rounding in the comparisons).

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use rayon::prelude::*;

use super::{for_each_permutation, Candidate, UnexpectednessTable};
use crate::storage::BitMatrix;

/// Largest small side handled exactly here.
pub const FEW_MEMBERS: usize = 5;

/// Largest `k! K C^2` (small-side orders x positions x patterns squared)
/// accepted: about a second or two of work per `10^8`.
pub const FEW_MEMBERS_WORK_LIMIT: f64 = 7e8;

/// The patterns of the large side: for `b` (`m x n`), with `small_rows`
/// true when the rows are the small side, the distinct sets of small-side
/// members held by the large-side members, each with its members in
/// ascending order; patterns in order of first appearance.
fn patterns(b: &BitMatrix, small_rows: bool) -> Vec<(u32, Vec<usize>)> {
    let (m, n) = (b.nrows(), b.ncols());
    let (k, big) = if small_rows { (m, n) } else { (n, m) };
    let mut code = vec![0u32; big];
    for s in 0..k {
        for t in 0..big {
            let cell = if small_rows { b.get(s, t) } else { b.get(t, s) };
            if cell {
                code[t] |= 1 << s;
            }
        }
    }
    let mut index = vec![usize::MAX; 1 << k];
    let mut out: Vec<(u32, Vec<usize>)> = Vec::new();
    for (t, &c) in code.iter().enumerate() {
        if index[c as usize] == usize::MAX {
            index[c as usize] = out.len();
            out.push((c, Vec::new()));
        }
        out[index[c as usize]].1.push(t);
    }
    out
}

/// True when the exact few-members search applies to `b`: the smaller side
/// has at most [`FEW_MEMBERS`] members and `k! K C^2 <=`
/// [`FEW_MEMBERS_WORK_LIMIT`], with `K` the larger side and `C` the number
/// of distinct patterns of its members.
pub fn few_members_applies(b: &BitMatrix) -> bool {
    let (m, n) = (b.nrows(), b.ncols());
    let k = m.min(n);
    if k == 0 || k > FEW_MEMBERS {
        return false;
    }
    let c = patterns(b, m <= n).len() as f64;
    let perms: f64 = (1..=k).map(|v| v as f64).product();
    perms * m.max(n) as f64 * c * c <= FEW_MEMBERS_WORK_LIMIT
}

/// An `f64` ordered for the heaps (costs are finite).
#[derive(Clone, Copy, PartialEq)]
struct Key(f64);
impl Eq for Key {}
impl PartialOrd for Key {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Key {
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        self.0.total_cmp(&other.0)
    }
}

/// The minimum-cost assignment of `K` positions to `C` patterns with
/// supplies `supply` (summing to `K`), cost `w[a K + t]`: the pattern of
/// every position. Successive shortest paths with potentials (see the
/// module documentation).
pub(crate) fn transport(w: &[f64], supply: &[usize], big: usize) -> Vec<usize> {
    let c = supply.len();
    debug_assert_eq!(w.len(), c * big);
    debug_assert_eq!(supply.iter().sum::<usize>(), big);
    let cost = |a: usize, t: usize| w[a * big + t];
    let mut left = supply.to_vec();
    let mut of = vec![usize::MAX; big]; // pattern of each position
    let mut stamp = vec![0u32; big];
    // heaps[b * c + a]: (w(a, t') - w(b, t'), t', stamp) for t' held by b.
    type Entry = Reverse<(Key, usize, u32)>;
    let mut heaps: Vec<BinaryHeap<Entry>> = (0..c * c).map(|_| BinaryHeap::new()).collect();
    let mut pi = vec![0.0f64; c];
    let mut dist = vec![0.0f64; c];
    let mut done = vec![false; c];
    let mut pred: Vec<Option<(usize, usize)>> = vec![None; c]; // (pattern, position taken)
    let push = |heaps: &mut Vec<BinaryHeap<Entry>>, of: &[usize], stamp: &[u32], t: usize| {
        let b = of[t];
        for a in 0..c {
            if a != b {
                heaps[b * c + a].push(Reverse((Key(cost(a, t) - cost(b, t)), t, stamp[t])));
            }
        }
    };
    for t in 0..big {
        // Dijkstra from the patterns with supply left (distance 0) over the
        // moves "a takes a position from b", reduced by the potentials.
        for a in 0..c {
            done[a] = false;
            pred[a] = None;
            dist[a] = if left[a] > 0 { -pi[a] } else { f64::INFINITY };
        }
        loop {
            let mut best = None;
            for a in 0..c {
                if !done[a] && dist[a].is_finite() && best.is_none_or(|x: usize| dist[a] < dist[x])
                {
                    best = Some(a);
                }
            }
            let Some(a) = best else { break };
            done[a] = true;
            for b in 0..c {
                if done[b] || b == a {
                    continue;
                }
                let heap = &mut heaps[b * c + a];
                // Drop entries of positions that b no longer holds.
                while let Some(&Reverse((_, tp, st))) = heap.peek() {
                    if of[tp] == b && stamp[tp] == st {
                        break;
                    }
                    heap.pop();
                }
                let Some(&Reverse((Key(e), tp, _))) = heap.peek() else {
                    continue;
                };
                let reduced = (e + pi[a] - pi[b]).max(0.0);
                let d = dist[a] + reduced;
                if d < dist[b] {
                    dist[b] = d;
                    pred[b] = Some((a, tp));
                }
            }
        }
        // True distances are dist + pi; the new position goes to the
        // pattern with the cheapest total.
        let mut end = usize::MAX;
        let mut end_cost = f64::INFINITY;
        for a in 0..c {
            if dist[a].is_finite() {
                let total = dist[a] + pi[a] + cost(a, t);
                if total < end_cost {
                    end_cost = total;
                    end = a;
                }
            }
        }
        debug_assert!(end != usize::MAX);
        for a in 0..c {
            if dist[a].is_finite() {
                pi[a] += dist[a];
            }
        }
        // Flip the chain: `end` takes t; each pattern gives up the position
        // its predecessor takes; the first pattern uses one of its supply.
        let mut a = end;
        let mut take = t;
        loop {
            of[take] = a;
            stamp[take] = stamp[take].wrapping_add(1);
            push(&mut heaps, &of, &stamp, take);
            match pred[a] {
                Some((p, tp)) => {
                    // p takes tp from a: a gave tp away, got `take`.
                    take = tp;
                    a = p;
                }
                None => {
                    left[a] -= 1;
                    break;
                }
            }
        }
    }
    of
}

/// The best packing of `b` over every order of its small side, each with
/// its optimal large-side order; strict improvements over `best` only, in
/// the enumeration order of the small side. Needs `min(m, n) <=`
/// [`FEW_MEMBERS`].
pub(super) fn pack_few(
    b: &BitMatrix,
    table: &UnexpectednessTable,
    mut best: Candidate,
) -> Candidate {
    let delta = table.deltas();
    let (m, n) = (b.nrows(), b.ncols());
    let small_rows = m <= n;
    let (k, big) = if small_rows { (m, n) } else { (n, m) };
    let pats = patterns(b, small_rows);
    let c = pats.len();
    let supply: Vec<usize> = pats.iter().map(|p| p.1.len()).collect();
    // d(s, t): delta with the small side at position s, the large at t.
    let d = |s: usize, t: usize| {
        if small_rows {
            delta[s * n + t]
        } else {
            delta[t * n + s]
        }
    };
    let mut orders: Vec<Vec<usize>> = Vec::new();
    for_each_permutation(k, |order| orders.push(order.to_vec()));
    // Each small-side order is solved on its own (in parallel); the best is
    // then picked in enumeration order, so ties keep the first found and
    // the result does not depend on the number of threads.
    let found: Vec<Candidate> = orders
        .par_iter()
        .map(|order| {
            // order[s] = small member at position s.
            let mut w = vec![0.0; c * big];
            for (a, (code, _)) in pats.iter().enumerate() {
                let row = &mut w[a * big..(a + 1) * big];
                for (s, &member) in order.iter().enumerate() {
                    if (code >> member) & 1 == 1 {
                        for (t, x) in row.iter_mut().enumerate() {
                            *x += d(s, t);
                        }
                    }
                }
            }
            let of = transport(&w, &supply, big);
            let mut next = vec![0usize; c];
            let big_order: Vec<usize> = of
                .iter()
                .map(|&a| {
                    let member = pats[a].1[next[a]];
                    next[a] += 1;
                    member
                })
                .collect();
            let (rows, cols) = if small_rows {
                (order.clone(), big_order)
            } else {
                (big_order, order.clone())
            };
            (table.total(b, &rows, &cols), rows, cols)
        })
        .collect();
    for cand in found {
        if cand.0 < best.0 {
            best = cand;
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_xoshiro::Xoshiro256PlusPlus;

    /// The transportation solution equals enumeration over every
    /// assignment of positions to patterns with the given supplies
    /// (the definition of the problem), on random small instances with
    /// ties (integer costs) and without.
    #[test]
    fn transport_matches_enumeration() {
        fn brute(w: &[f64], left: &mut [usize], big: usize, t: usize) -> f64 {
            if t == big {
                return 0.0;
            }
            let mut best = f64::INFINITY;
            for a in 0..left.len() {
                if left[a] > 0 {
                    left[a] -= 1;
                    best = best.min(w[a * big + t] + brute(w, left, big, t + 1));
                    left[a] += 1;
                }
            }
            best
        }
        for seed in 0..300u64 {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
            let c = rng.random_range(1..=4);
            let big = rng.random_range(c..=8);
            let mut supply = vec![1usize; c];
            for _ in c..big {
                supply[rng.random_range(0..c)] += 1;
            }
            let w: Vec<f64> = (0..c * big)
                .map(|_| {
                    if seed % 2 == 0 {
                        rng.random_range(-3..4) as f64
                    } else {
                        rng.random_range(-1.0..1.0)
                    }
                })
                .collect();
            let of = transport(&w, &supply, big);
            let mut used = vec![0usize; c];
            for &a in &of {
                used[a] += 1;
            }
            assert_eq!(used, supply, "seed {seed}: supplies kept");
            let got: f64 = of.iter().enumerate().map(|(t, &a)| w[a * big + t]).sum();
            let want = brute(&w, &mut supply.clone(), big, 0);
            assert!((got - want).abs() < 1e-9, "seed {seed}: {got} vs {want}");
        }
    }
}
