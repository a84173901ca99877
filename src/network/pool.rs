//! The pieces of one kind available to a search, and the exact walk over every network of `n`
//! pieces whose value lies in a window.
//!
//! The pool keeps its pieces sorted by value and every two-piece network (both operations) in
//! sorted lists. Networks of three and four pieces are never listed: a window on the whole
//! network maps, through the outer pieces, to a window on an inner pair, which is found by binary
//! search (meet in the middle). The walk is exact: every canonical network (see `shape.rs`) whose
//! value lies in the window and whose pieces the stock can supply is handed to the caller once.
//! The caller may narrow the window after each network (branch and bound). No I/O, no store.

use super::shape::{Op, Shape};
use std::time::Instant;

/// One stock row as the search sees it.
#[derive(Debug, Clone, PartialEq)]
pub struct Item {
    /// Index of the row in the caller's list of parts.
    pub row: usize,
    /// Nominal value in SI units.
    pub value: f64,
    /// Lowest value within tolerance.
    pub lo: f64,
    /// Highest value within tolerance.
    pub hi: f64,
    /// Pieces free for this design.
    pub avail: u32,
    /// The wider side of the tolerance, as a ratio (0.01 for ±1 %).
    pub tol: f64,
}

/// A two-piece network: pool indices `a ≤ b`.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Pair {
    value: f64,
    a: u32,
    b: u32,
}

/// A network found by the walk: a shape and the pool indices of its pieces in the shape's leaf
/// order.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cand {
    /// The shape.
    pub shape: Shape,
    /// Pool indices of the pieces; only the first `shape.pieces()` are used.
    pub idx: [u32; 4],
    /// Nominal value in SI units.
    pub value: f64,
}

impl Cand {
    /// The pool indices in use.
    pub fn pieces(&self) -> &[u32] {
        &self.idx[..self.shape.pieces()]
    }
}

/// What the caller wants after seeing a network.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Step {
    /// Go on with this (possibly narrower) window.
    Go(f64, f64),
    /// Stop the walk.
    Stop,
}

/// The callback of a walk: sees each network with the usage counts (which the caller may change
/// temporarily, e.g. to search another position with this network's pieces taken).
pub type Visitor<'f> = dyn FnMut(&Cand, &mut [u32]) -> Step + 'f;

/// Sorted pieces and two-piece networks of one kind.
#[derive(Debug, Clone)]
pub struct Pool {
    items: Vec<Item>,
    pairs: [Vec<Pair>; 2],
}

/// Relative slack on the binary searches; every network is re-checked exactly against the
/// window, so this only guards against rounding in the inverted windows.
const SLACK: f64 = 1e-9;

/// Relative widening of every window a caller hands to [`Pool::walk`] (also after each
/// [`Step::Go`]): networks a hair outside it are handed over too, and the caller's exact test
/// decides. A window computed through divisions and logarithms (a duty of exactly 75 %, a
/// resistance of exactly 1005 Ω for 1 kΩ ± 0.5 %) can land a rounding error inside the part it
/// should admit; a millionth is far above any rounding and far below any tolerance.
pub const WIDEN: f64 = 1e-6;

#[inline]
fn widen(lo: f64, hi: f64) -> (f64, f64) {
    (lo * (1.0 - WIDEN), hi * (1.0 + WIDEN))
}

impl Pool {
    /// A pool of these rows (rows with nothing available are dropped).
    pub fn new(items: Vec<Item>) -> Self {
        Self::with_pairs(items, true)
    }

    /// A pool of these rows; without `pairs` the two-piece lists stay empty (memory grows with
    /// the square of the rows), so only walks of one piece may be asked of it.
    pub fn with_pairs(mut items: Vec<Item>, pairs: bool) -> Self {
        items.retain(|i| i.avail > 0 && i.value > 0.0 && i.value.is_finite());
        items.sort_by(|x, y| x.value.total_cmp(&y.value).then(x.row.cmp(&y.row)));
        let want = pairs;
        let mut pairs = [Vec::new(), Vec::new()];
        for (k, op) in Op::BOTH.iter().enumerate() {
            if !want {
                break;
            }
            let list = &mut pairs[k];
            for a in 0..items.len() {
                for b in a..items.len() {
                    if a == b && items[a].avail < 2 {
                        continue;
                    }
                    list.push(Pair {
                        value: op.apply(items[a].value, items[b].value),
                        a: a as u32,
                        b: b as u32,
                    });
                }
            }
            list.sort_by(|x, y| x.value.total_cmp(&y.value));
        }
        Self { items, pairs }
    }

    /// The pieces, sorted by value.
    pub fn items(&self) -> &[Item] {
        &self.items
    }

    /// Number of rows.
    pub fn len(&self) -> usize {
        self.items.len()
    }

    /// Whether the pool holds nothing.
    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }

    /// A usage vector (all zero) for this pool.
    pub fn fresh_usage(&self) -> Vec<u32> {
        vec![0; self.items.len()]
    }

    /// Whether the stock can supply `idx` on top of `used`.
    pub fn fits(&self, idx: &[u32], used: &[u32]) -> bool {
        idx.iter().all(|&i| {
            let mult = idx.iter().filter(|&&j| j == i).count() as u32;
            let (u, a) = (
                used.get(i as usize).copied().unwrap_or(u32::MAX),
                self.items[i as usize].avail,
            );
            u.saturating_add(mult) <= a
        })
    }

    /// Add (`+1`) or remove (`-1`) the pieces of `c` from `used`.
    pub fn take(c: &Cand, used: &mut [u32], sign: i32) {
        for &i in c.pieces() {
            let u = &mut used[i as usize];
            *u = if sign > 0 {
                *u + 1
            } else {
                u.saturating_sub(1)
            };
        }
    }

    /// Value of a network at its pieces' nominal, lowest and highest values.
    pub fn span(&self, c: &Cand) -> (f64, f64, f64) {
        let n = c.shape.pieces();
        let mut v = [0.0; 4];
        let mut lo = [0.0; 4];
        let mut hi = [0.0; 4];
        for k in 0..n {
            let it = &self.items[c.idx[k] as usize];
            v[k] = it.value;
            lo[k] = it.lo;
            hi[k] = it.hi;
        }
        // Series and parallel are increasing in every piece, so the extremes of the network are
        // its values at the pieces' extremes (exact worst case).
        (
            c.shape.value(&v[..n]),
            c.shape.value(&lo[..n]),
            c.shape.value(&hi[..n]),
        )
    }

    /// The smallest and largest value any network of `n` pieces can take (ignoring stock counts
    /// beyond one of each row, so this is a safe outer bound).
    pub fn range(&self, n: usize) -> (f64, f64) {
        match (self.items.first(), self.items.last()) {
            (Some(lo), Some(hi)) => (lo.value / n as f64, hi.value * n as f64),
            _ => (f64::INFINITY, 0.0),
        }
    }

    /// Hand every canonical network of exactly `n` pieces with value in `[lo, hi]` that fits on
    /// top of `used` to `f`, which may narrow the window or stop. Returns false when stopped
    /// (by the visitor or the deadline); an empty window ends the walk normally.
    pub fn walk(
        &self,
        n: usize,
        lo: f64,
        hi: f64,
        used: &mut [u32],
        deadline: Option<Instant>,
        f: &mut Visitor<'_>,
    ) -> bool {
        if lo > hi || self.items.is_empty() {
            return true;
        }
        let (lo, hi) = widen(lo, hi);
        let mut w = Walk {
            pool: self,
            lo,
            hi,
            stop: false,
            aborted: false,
            used,
            f,
            deadline,
            ticks: 0,
        };
        match n {
            1 => w.singles(),
            2 => {
                for op in Op::BOTH {
                    w.pair_scan(Shape::Two(op), op, &[], [0; 4], 0, |_, _| true);
                }
            }
            3 => {
                for t in Op::BOTH {
                    w.three(t);
                }
            }
            4 => {
                for t in Op::BOTH {
                    w.four(t);
                }
            }
            _ => {}
        }
        !w.aborted
    }
}

struct Walk<'p, 'u, 'f, 'g> {
    pool: &'p Pool,
    lo: f64,
    hi: f64,
    stop: bool,
    aborted: bool,
    used: &'u mut [u32],
    f: &'f mut Visitor<'g>,
    deadline: Option<Instant>,
    ticks: u32,
}

impl Walk<'_, '_, '_, '_> {
    fn tick(&mut self) -> bool {
        self.ticks = self.ticks.wrapping_add(1);
        if self.ticks % 4096 == 0 && self.deadline.is_some_and(|d| Instant::now() >= d) {
            self.stop = true;
            self.aborted = true;
        }
        self.stop
    }

    fn emit(&mut self, shape: Shape, idx: [u32; 4], value: f64) {
        if self.stop || value < self.lo || value > self.hi {
            return;
        }
        let n = shape.pieces();
        if !self.pool.fits(&idx[..n], self.used) {
            return;
        }
        let c = Cand { shape, idx, value };
        match (self.f)(&c, self.used) {
            Step::Go(lo, hi) => {
                (self.lo, self.hi) = if lo > hi { (lo, hi) } else { widen(lo, hi) };
                // An empty window can hold nothing more: finish early, not aborted.
                if lo
                    .partial_cmp(&hi)
                    .is_none_or(|o| o == std::cmp::Ordering::Greater)
                {
                    self.stop = true;
                }
            }
            Step::Stop => {
                self.stop = true;
                self.aborted = true;
            }
        }
    }

    /// The window on the innermost value, through `chain` = [(op, y) from the outside in].
    fn inner(&self, chain: &[(Op, f64)]) -> (f64, f64) {
        let (mut lo, mut hi) = (self.lo, self.hi);
        for &(op, y) in chain {
            lo = op.invert(lo, y);
            hi = op.invert(hi, y);
        }
        (lo * (1.0 - SLACK), hi * (1.0 + SLACK))
    }

    fn singles(&mut self) {
        let items = &self.pool.items;
        let start = items.partition_point(|it| it.value < self.lo * (1.0 - SLACK));
        for (i, it) in items.iter().enumerate().skip(start) {
            if self.tick() || it.value > self.hi {
                break;
            }
            self.emit(Shape::One, [i as u32, 0, 0, 0], it.value);
        }
    }

    /// Scan the `inner_op` pair list for pairs whose value, wrapped by `chain`, lies in the
    /// window; `outer` holds the already chosen leaves (placed after the pair's two), `keep`
    /// filters pairs by position and content (canonical order).
    fn pair_scan(
        &mut self,
        shape: Shape,
        inner_op: Op,
        chain: &[(Op, f64)],
        outer: [u32; 4],
        outer_len: usize,
        keep: impl Fn(usize, &Pair) -> bool,
    ) {
        let list = &self.pool.pairs[inner_op.index()];
        let (xlo, _) = self.inner(chain);
        let start = list.partition_point(|p| p.value < xlo);
        for (pos, p) in list.iter().enumerate().skip(start) {
            if self.tick() {
                return;
            }
            // The window may have narrowed since the scan began.
            let (_, xhi) = self.inner(chain);
            if p.value > xhi {
                return;
            }
            if !keep(pos, p) {
                continue;
            }
            let mut idx = [p.a, p.b, 0, 0];
            idx[2..2 + outer_len].copy_from_slice(&outer[..outer_len]);
            // Rebuild the value outward exactly as Shape::value does.
            let mut v = p.value;
            for &(op, y) in chain.iter().rev() {
                v = op.apply(v, y);
            }
            self.emit(shape, idx, v);
        }
    }

    /// Outer single pieces `y` for which `T(x, y)` can reach the window for some positive `x`.
    fn outer_range(&self, t: Op, lo: f64, hi: f64) -> std::ops::Range<usize> {
        let items = &self.pool.items;
        match t {
            // x + y ≤ hi needs y < hi.
            Op::Add => 0..items.partition_point(|it| it.value < hi * (1.0 + SLACK)),
            // T(x, y) < y needs y > lo.
            Op::Recip => items.partition_point(|it| it.value <= lo * (1.0 - SLACK))..items.len(),
        }
    }

    fn three(&mut self, t: Op) {
        let d = t.dual();
        for c in self.outer_range(t, self.lo, self.hi) {
            if self.stop {
                return;
            }
            let vc = self.pool.items[c].value;
            let cu = c as u32;
            // T(T(a,b),c) with b ≤ c: each multiset once.
            self.pair_scan(Shape::Three(t), t, &[(t, vc)], [cu, 0, 0, 0], 1, |_, p| {
                p.b <= cu
            });
            self.pair_scan(
                Shape::PairThen(t),
                d,
                &[(t, vc)],
                [cu, 0, 0, 0],
                1,
                |_, _| true,
            );
        }
    }

    fn four(&mut self, t: Op) {
        let d = t.dual();
        for dd in self.outer_range(t, self.lo, self.hi) {
            if self.stop {
                return;
            }
            let vd = self.pool.items[dd].value;
            let du = dd as u32;
            // Window on the inner three-piece network T'(…) inside T(…, d).
            let (mlo, mhi) = (t.invert(self.lo, vd), t.invert(self.hi, vd));
            if mlo > mhi {
                continue;
            }
            // T(a,b,c,d) = T(T(T(a,b),c),d), b ≤ c ≤ d; and T(D(a,b),c,d) = T(T(D(a,b),c),d),
            // c ≤ d. The middle piece c combines by T.
            for c in self.outer_range(t, mlo, mhi) {
                if self.stop {
                    return;
                }
                if c > dd {
                    break;
                }
                let vc = self.pool.items[c].value;
                let cu = c as u32;
                let chain = [(t, vd), (t, vc)];
                self.pair_scan(Shape::Four(t), t, &chain, [cu, du, 0, 0], 2, |_, p| {
                    p.b <= cu
                });
                self.pair_scan(
                    Shape::PairThenTwo(t),
                    d,
                    &chain,
                    [cu, du, 0, 0],
                    2,
                    |_, _| true,
                );
            }
            // T(D(a,b,c),d) = T(D(D(a,b),c),d), b ≤ c; T(D(T(a,b),c),d). The middle piece
            // combines by D.
            let (mlo, mhi) = (t.invert(self.lo, vd), t.invert(self.hi, vd));
            for c in self.outer_range(d, mlo, mhi) {
                if self.stop {
                    return;
                }
                let vc = self.pool.items[c].value;
                let cu = c as u32;
                let chain = [(t, vd), (d, vc)];
                self.pair_scan(
                    Shape::TripleThen(t),
                    d,
                    &chain,
                    [cu, du, 0, 0],
                    2,
                    |_, p| p.b <= cu,
                );
                self.pair_scan(
                    Shape::NestedThen(t),
                    t,
                    &chain,
                    [cu, du, 0, 0],
                    2,
                    |_, _| true,
                );
            }
        }
        // T(D(a,b),D(c,d)): outer pair at list position i, inner pair at position ≥ i.
        let list = &self.pool.pairs[d.index()];
        let end = match t {
            Op::Add => list.partition_point(|p| p.value < self.hi * (1.0 + SLACK)),
            Op::Recip => list.len(),
        };
        let start = match t {
            Op::Add => 0,
            Op::Recip => list.partition_point(|p| p.value <= self.lo * (1.0 - SLACK)),
        };
        for (i, &q) in list.iter().enumerate().take(end).skip(start) {
            if self.stop {
                return;
            }
            self.pair_scan(
                Shape::TwoPairs(t),
                d,
                &[(t, q.value)],
                [q.a, q.b, 0, 0],
                2,
                |pos, _| pos >= i,
            );
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::net::Combine;
    use std::collections::HashSet;

    fn pool(vals: &[(f64, u32)]) -> Pool {
        Pool::new(
            vals.iter()
                .enumerate()
                .map(|(row, &(value, avail))| Item {
                    row,
                    value,
                    lo: value * 0.99,
                    hi: value * 1.01,
                    avail,
                    tol: 0.01,
                })
                .collect(),
        )
    }

    /// Every network the walk yields, as (shape, leaves) with leaves written as rows.
    fn all(p: &Pool, n: usize, lo: f64, hi: f64) -> Vec<(Cand, f64)> {
        let mut out = Vec::new();
        let mut used = p.fresh_usage();
        p.walk(n, lo, hi, &mut used, None, &mut |c, _| {
            out.push((*c, c.value));
            Step::Go(lo, hi)
        });
        out
    }

    /// Multiset signature of a network's tree: a canonical string independent of leaf order.
    fn canon(net: &crate::network::Net, vals: &[f64]) -> String {
        use crate::network::Net;
        match net {
            Net::Piece(i) => format!("{}", vals[*i]),
            Net::Series(ch) | Net::Parallel(ch) => {
                let mut parts: Vec<String> = ch.iter().map(|c| canon(c, vals)).collect();
                parts.sort();
                let tag = if matches!(net, Net::Series(_)) {
                    "S"
                } else {
                    "P"
                };
                format!("{tag}({})", parts.join(","))
            }
        }
    }

    #[test]
    fn walk_yields_each_network_once_and_all_of_them() {
        // Distinct values, one of each except 220 (three pieces) so repeats are possible.
        let p = pool(&[(100.0, 1), (220.0, 3), (470.0, 1), (1000.0, 2), (3300.0, 1)]);
        for n in 1..=4 {
            let found = all(&p, n, 0.0, f64::INFINITY);
            let mut seen = HashSet::new();
            for (c, v) in &found {
                let vals: Vec<f64> = c
                    .pieces()
                    .iter()
                    .map(|&i| p.items()[i as usize].value)
                    .collect();
                let tree = c.shape.to_net(Combine::Resistive);
                let key = canon(&tree, &vals);
                assert!(seen.insert(key.clone()), "duplicate {key}");
                let tv = tree.value(&vals, Combine::Resistive);
                assert!((tv - v).abs() <= 1e-9 * tv, "{key}: {tv} vs {v}");
                assert!(p.fits(c.pieces(), &p.fresh_usage()));
            }
            // Independent count: all multisets of size n within stock, times distinct trees.
            let expected = brute_count(&p, n);
            assert_eq!(seen.len(), expected, "n = {n}");
        }
    }

    /// Count distinct (multiset, tree) networks by listing every labelled tree over every leaf
    /// sequence and deduplicating by canonical form.
    fn brute_count(p: &Pool, n: usize) -> usize {
        use crate::network::Net;
        fn trees(n: usize, series_top: Option<bool>) -> Vec<Net> {
            // All ordered trees with n leaves (numbered later); the top op alternates.
            if n == 1 {
                return vec![Net::Piece(0)];
            }
            let mut out = Vec::new();
            for top in [true, false] {
                if series_top == Some(!top) {
                    continue;
                }
                for comp in compositions(n) {
                    let mut prods: Vec<Vec<Net>> = vec![vec![]];
                    for &k in &comp {
                        let subs = trees(k, Some(!top));
                        let mut nxt = Vec::new();
                        for pre in &prods {
                            for s in &subs {
                                let mut v = pre.clone();
                                v.push(s.clone());
                                nxt.push(v);
                            }
                        }
                        prods = nxt;
                    }
                    for ch in prods {
                        out.push(if top {
                            Net::Series(ch)
                        } else {
                            Net::Parallel(ch)
                        });
                    }
                }
            }
            out
        }
        fn compositions(n: usize) -> Vec<Vec<usize>> {
            let mut out = Vec::new();
            fn rec(left: usize, cur: &mut Vec<usize>, out: &mut Vec<Vec<usize>>, n: usize) {
                if left == 0 {
                    if cur.len() >= 2 {
                        out.push(cur.clone());
                    }
                    return;
                }
                for k in 1..=left.min(n - 1) {
                    cur.push(k);
                    rec(left - k, cur, out, n);
                    cur.pop();
                }
            }
            rec(n, &mut Vec::new(), &mut out, n);
            out
        }
        fn renumber(net: &Net, next: &mut usize) -> Net {
            match net {
                Net::Piece(_) => {
                    *next += 1;
                    Net::Piece(*next - 1)
                }
                Net::Series(ch) => Net::Series(ch.iter().map(|c| renumber(c, next)).collect()),
                Net::Parallel(ch) => Net::Parallel(ch.iter().map(|c| renumber(c, next)).collect()),
            }
        }
        let shapes: Vec<Net> = trees(n, None).iter().map(|t| renumber(t, &mut 0)).collect();
        let m = p.len();
        let mut seen = HashSet::new();
        let mut seq = vec![0usize; n];
        loop {
            let idx: Vec<u32> = seq.iter().map(|&i| i as u32).collect();
            if p.fits(&idx, &p.fresh_usage()) {
                let vals: Vec<f64> = seq.iter().map(|&i| p.items()[i].value).collect();
                for s in &shapes {
                    seen.insert(canon(s, &vals));
                }
            }
            let mut k = 0;
            loop {
                if k == n {
                    return seen.len();
                }
                seq[k] += 1;
                if seq[k] < m {
                    break;
                }
                seq[k] = 0;
                k += 1;
            }
        }
    }

    #[test]
    fn window_walk_matches_filtering_the_full_walk() {
        let p = pool(&[
            (100.0, 2),
            (150.0, 1),
            (220.0, 2),
            (330.0, 1),
            (470.0, 2),
            (680.0, 1),
        ]);
        for n in 1..=4 {
            let full = all(&p, n, 0.0, f64::INFINITY);
            for (lo, hi) in [
                (300.0, 330.0),
                (90.0, 120.0),
                (50.0, 51.0),
                (1000.0, 1200.0),
            ] {
                let mut want: Vec<f64> = full
                    .iter()
                    .map(|x| x.1)
                    .filter(|v| *v >= lo && *v <= hi)
                    .collect();
                let mut got: Vec<f64> = all(&p, n, lo, hi).iter().map(|x| x.1).collect();
                want.sort_by(f64::total_cmp);
                got.sort_by(f64::total_cmp);
                assert_eq!(got, want, "n = {n}, window {lo}..{hi}");
            }
        }
    }

    #[test]
    fn stock_counts_bind() {
        // One 1 kΩ only: no 1k + 1k, and nothing once it is taken.
        let p = pool(&[(1000.0, 1)]);
        assert_eq!(all(&p, 2, 0.0, f64::INFINITY).len(), 0);
        let mut used = vec![1];
        let mut n = 0;
        p.walk(1, 0.0, f64::INFINITY, &mut used, None, &mut |_, _| {
            n += 1;
            Step::Go(0.0, f64::INFINITY)
        });
        assert_eq!(n, 0);
    }
}
