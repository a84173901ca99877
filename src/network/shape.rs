//! Every distinct series/parallel shape of one to four pieces, written over two abstract
//! operations: `Add` (values add: resistors in series, capacitors in parallel) and `Recip`
//! (reciprocals add: resistors in parallel, capacitors in series).
//!
//! Owns the shape list, the canonical order of a shape's leaves (so one multiset in one shape is
//! produced once), the value of a shape at given piece values, and the conversion to a [`Net`]
//! tree for display. Knows nothing of stock.
//!
//! The shapes, with `T` the top operation and `D` its dual (common practice: these are all the
//! series/parallel trees; there are 1, 2, 4 and 10 of them for 1, 2, 3 and 4 pieces):
//!
//! | pieces | shapes |
//! |---|---|
//! | 1 | `a` |
//! | 2 | `T(a,b)` |
//! | 3 | `T(a,b,c)`, `T(D(a,b),c)` |
//! | 4 | `T(a,b,c,d)`, `T(D(a,b),c,d)`, `T(D(a,b,c),d)`, `T(D(T(a,b),c),d)`, `T(D(a,b),D(c,d))` |

use super::net::{Combine, Net};

/// How two values combine.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Op {
    /// Values add (resistors in series, capacitors in parallel).
    Add,
    /// Reciprocals add (resistors in parallel, capacitors in series).
    Recip,
}

impl Op {
    /// Both operations.
    pub const BOTH: [Op; 2] = [Op::Add, Op::Recip];

    /// The other operation.
    pub fn dual(self) -> Op {
        match self {
            Op::Add => Op::Recip,
            Op::Recip => Op::Add,
        }
    }

    /// Combine two positive values.
    #[inline]
    pub fn apply(self, x: f64, y: f64) -> f64 {
        match self {
            Op::Add => x + y,
            Op::Recip => 1.0 / (1.0 / x + 1.0 / y),
        }
    }

    /// The `x` for which `apply(x, y) == v`; both operations are increasing in `x`, so a window
    /// on `v` maps to a window on `x`. `0` when no positive `x` is small enough, `+∞` when none is
    /// large enough.
    #[inline]
    pub fn invert(self, v: f64, y: f64) -> f64 {
        match self {
            Op::Add => (v - y).max(0.0),
            Op::Recip => {
                if v <= 0.0 {
                    0.0
                } else if v >= y {
                    f64::INFINITY
                } else {
                    1.0 / (1.0 / v - 1.0 / y)
                }
            }
        }
    }

    /// Index 0 for `Add`, 1 for `Recip`.
    pub fn index(self) -> usize {
        match self {
            Op::Add => 0,
            Op::Recip => 1,
        }
    }

    /// The tree node this operation becomes for parts that combine like `combine`.
    fn is_series(self, combine: Combine) -> bool {
        matches!(
            (self, combine),
            (Op::Add, Combine::Resistive) | (Op::Recip, Combine::Capacitive)
        )
    }
}

/// One series/parallel shape; the operation is the top one (see the module table).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Shape {
    /// One piece.
    One,
    /// `T(a,b)`, a ≤ b.
    Two(Op),
    /// `T(a,b,c)`, a ≤ b ≤ c.
    Three(Op),
    /// `T(D(a,b),c)`, a ≤ b.
    PairThen(Op),
    /// `T(a,b,c,d)`, a ≤ b ≤ c ≤ d.
    Four(Op),
    /// `T(D(a,b),c,d)`, a ≤ b, c ≤ d.
    PairThenTwo(Op),
    /// `T(D(a,b,c),d)`, a ≤ b ≤ c.
    TripleThen(Op),
    /// `T(D(T(a,b),c),d)`, a ≤ b.
    NestedThen(Op),
    /// `T(D(a,b),D(c,d))`, a ≤ b, c ≤ d, (c,d) no later than (a,b) in the caller's pair order.
    TwoPairs(Op),
}

impl Shape {
    /// Every shape with exactly `n` pieces (empty for n outside 1..=4).
    pub fn with_pieces(n: usize) -> Vec<Shape> {
        let mut out = Vec::new();
        for op in Op::BOTH {
            match n {
                2 => out.push(Shape::Two(op)),
                3 => out.extend([Shape::Three(op), Shape::PairThen(op)]),
                4 => out.extend([
                    Shape::Four(op),
                    Shape::PairThenTwo(op),
                    Shape::TripleThen(op),
                    Shape::NestedThen(op),
                    Shape::TwoPairs(op),
                ]),
                _ => {}
            }
        }
        if n == 1 {
            out.push(Shape::One);
        }
        out
    }

    /// How many pieces the shape holds.
    pub fn pieces(self) -> usize {
        match self {
            Shape::One => 1,
            Shape::Two(_) => 2,
            Shape::Three(_) | Shape::PairThen(_) => 3,
            _ => 4,
        }
    }

    /// The value at piece values `v` (leaf order as in the variant docs), computed in the same
    /// nesting order the search uses.
    pub fn value(self, v: &[f64]) -> f64 {
        let g = |i: usize| v.get(i).copied().unwrap_or(f64::NAN);
        match self {
            Shape::One => g(0),
            Shape::Two(t) => t.apply(g(0), g(1)),
            Shape::Three(t) => t.apply(t.apply(g(0), g(1)), g(2)),
            Shape::PairThen(t) => t.apply(t.dual().apply(g(0), g(1)), g(2)),
            Shape::Four(t) => t.apply(t.apply(t.apply(g(0), g(1)), g(2)), g(3)),
            Shape::PairThenTwo(t) => t.apply(t.apply(t.dual().apply(g(0), g(1)), g(2)), g(3)),
            Shape::TripleThen(t) => {
                let d = t.dual();
                t.apply(d.apply(d.apply(g(0), g(1)), g(2)), g(3))
            }
            Shape::NestedThen(t) => t.apply(t.dual().apply(t.apply(g(0), g(1)), g(2)), g(3)),
            Shape::TwoPairs(t) => {
                let d = t.dual();
                t.apply(d.apply(g(0), g(1)), d.apply(g(2), g(3)))
            }
        }
    }

    /// The shape as a tree whose leaf `i` is piece `i` of the shape.
    pub fn to_net(self, combine: Combine) -> Net {
        let p = Net::Piece;
        let node = |op: Op, ch: Vec<Net>| {
            if op.is_series(combine) {
                Net::Series(ch)
            } else {
                Net::Parallel(ch)
            }
        };
        match self {
            Shape::One => p(0),
            Shape::Two(t) => node(t, vec![p(0), p(1)]),
            Shape::Three(t) => node(t, vec![p(0), p(1), p(2)]),
            Shape::PairThen(t) => node(t, vec![node(t.dual(), vec![p(0), p(1)]), p(2)]),
            Shape::Four(t) => node(t, vec![p(0), p(1), p(2), p(3)]),
            Shape::PairThenTwo(t) => node(t, vec![node(t.dual(), vec![p(0), p(1)]), p(2), p(3)]),
            Shape::TripleThen(t) => node(t, vec![node(t.dual(), vec![p(0), p(1), p(2)]), p(3)]),
            Shape::NestedThen(t) => node(
                t,
                vec![node(t.dual(), vec![node(t, vec![p(0), p(1)]), p(2)]), p(3)],
            ),
            Shape::TwoPairs(t) => node(
                t,
                vec![
                    node(t.dual(), vec![p(0), p(1)]),
                    node(t.dual(), vec![p(2), p(3)]),
                ],
            ),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shape_counts_match_series_parallel_trees() {
        // common practice (series/parallel network counting): 1, 2, 4, 10 trees of 1–4 pieces.
        let counts: Vec<usize> = (1..=4).map(|n| Shape::with_pieces(n).len()).collect();
        assert_eq!(counts, vec![1, 2, 4, 10]);
        for n in 1..=4 {
            assert!(Shape::with_pieces(n).iter().all(|s| s.pieces() == n));
        }
    }

    #[test]
    fn shape_value_agrees_with_the_tree() {
        let vals = [1000.0, 2200.0, 4700.0, 330.0];
        for n in 1..=4 {
            for s in Shape::with_pieces(n) {
                for combine in [Combine::Resistive, Combine::Capacitive] {
                    let tree = s.to_net(combine);
                    assert_eq!(tree.pieces(), n);
                    let a = tree.value(&vals[..n], combine);
                    // The shape's ops are abstract: Add is series for resistors, parallel for caps.
                    let b = s.value(&vals[..n]);
                    assert!(
                        ((a - b) / a).abs() < 1e-12,
                        "{s:?} {combine:?}: tree {a} vs shape {b}"
                    );
                }
            }
        }
    }

    #[test]
    fn all_four_piece_shapes_give_distinct_trees() {
        let mut trees: Vec<String> = Shape::with_pieces(4)
            .into_iter()
            .map(|s| {
                s.to_net(Combine::Resistive)
                    .describe(&|i| ["a", "b", "c", "d"][i].to_string())
            })
            .collect();
        trees.sort();
        trees.dedup();
        assert_eq!(trees.len(), 10);
    }

    #[test]
    fn invert_undoes_apply() {
        for op in Op::BOTH {
            let (x, y) = (1234.5, 987.0);
            let v = op.apply(x, y);
            assert!((op.invert(v, y) - x).abs() < 1e-9 * x, "{op:?}");
        }
        assert_eq!(Op::Recip.invert(10.0, 5.0), f64::INFINITY);
        assert_eq!(Op::Add.invert(1.0, 5.0), 0.0);
    }
}
