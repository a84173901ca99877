//! A network of pieces in series and parallel, as a small tree over piece indices.
//!
//! Resistors add in series; capacitors add in parallel. The tree knows nothing of stock rows:
//! leaves are indices into a slice of piece values supplied by the caller, so the same tree can
//! be evaluated at nominal values, at tolerance corners, or at Monte Carlo samples.

use std::fmt;

/// Whether values add in series (resistors) or in parallel (capacitors).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
pub enum Combine {
    /// Resistance-like: series adds, parallel is the reciprocal of summed reciprocals.
    Resistive,
    /// Capacitance-like: parallel adds, series is the reciprocal of summed reciprocals.
    Capacitive,
}

/// A series/parallel tree whose leaves index a slice of piece values.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub enum Net {
    /// One piece: an index into the caller's value slice.
    Piece(usize),
    /// Children in series.
    Series(Vec<Net>),
    /// Children in parallel.
    Parallel(Vec<Net>),
}

impl Net {
    /// Value of the network given the piece values (in SI units).
    pub fn value(&self, values: &[f64], combine: Combine) -> f64 {
        match self {
            Net::Piece(i) => values.get(*i).copied().unwrap_or(f64::NAN),
            Net::Series(ch) => {
                let it = ch.iter().map(|c| c.value(values, combine));
                match combine {
                    Combine::Resistive => it.sum(),
                    Combine::Capacitive => reciprocal_sum(it),
                }
            }
            Net::Parallel(ch) => {
                let it = ch.iter().map(|c| c.value(values, combine));
                match combine {
                    Combine::Resistive => reciprocal_sum(it),
                    Combine::Capacitive => it.sum(),
                }
            }
        }
    }

    /// How many pieces the network uses.
    pub fn pieces(&self) -> usize {
        match self {
            Net::Piece(_) => 1,
            Net::Series(ch) | Net::Parallel(ch) => ch.iter().map(Net::pieces).sum(),
        }
    }

    /// The piece indices, left to right.
    pub fn leaves(&self) -> Vec<usize> {
        let mut out = Vec::new();
        self.collect_leaves(&mut out);
        out
    }

    fn collect_leaves(&self, out: &mut Vec<usize>) {
        match self {
            Net::Piece(i) => out.push(*i),
            Net::Series(ch) | Net::Parallel(ch) => ch.iter().for_each(|c| c.collect_leaves(out)),
        }
    }

    /// Write the network in words, naming each piece with `name(index)`:
    /// `33 kΩ in series with 2.2 kΩ`, `10 nF in parallel with 2.2 nF`,
    /// `(10 kΩ in parallel with 10 kΩ) in series with 1 kΩ`. Never a bare `+` or `∥`: readers
    /// take `47 nF + 470 nF` for capacitors in parallel, and wire the wrong one.
    pub fn describe(&self, name: &dyn Fn(usize) -> String) -> String {
        self.describe_inner(name, true)
    }

    fn describe_inner(&self, name: &dyn Fn(usize) -> String, top: bool) -> String {
        let (parts, sep) = match self {
            Net::Piece(i) => return name(*i),
            Net::Series(ch) => (ch, " in series with "),
            Net::Parallel(ch) => (ch, " in parallel with "),
        };
        let inner: Vec<String> = parts
            .iter()
            .map(|c| c.describe_inner(name, false))
            .collect();
        let joined = inner.join(sep);
        if top { joined } else { format!("({joined})") }
    }

    /// The network in the grammar `onhand check` reads: `+` series, `||` parallel, parentheses
    /// around every inner group (`(10kΩ||10kΩ)+1kΩ`). For machines and for handing a found
    /// design to `check`; people read [`Net::describe`].
    pub fn expression(&self, name: &dyn Fn(usize) -> String) -> String {
        self.expression_inner(name, true)
    }

    fn expression_inner(&self, name: &dyn Fn(usize) -> String, top: bool) -> String {
        let (parts, sep) = match self {
            Net::Piece(i) => return name(*i),
            Net::Series(ch) => (ch, "+"),
            Net::Parallel(ch) => (ch, "||"),
        };
        let inner: Vec<String> = parts
            .iter()
            .map(|c| c.expression_inner(name, false))
            .collect();
        let joined = inner.join(sep);
        if top { joined } else { format!("({joined})") }
    }

    /// How the pieces are wired, without their values: "single", "2 in series",
    /// "2 in parallel", "(2 in parallel) in series with 1", …
    pub fn wiring(&self) -> String {
        match self {
            Net::Piece(_) => "single".to_string(),
            Net::Series(ch) | Net::Parallel(ch) => {
                let how = if matches!(self, Net::Series(_)) {
                    "series"
                } else {
                    "parallel"
                };
                if ch.iter().all(|c| matches!(c, Net::Piece(_))) {
                    format!("{} in {how}", ch.len())
                } else {
                    self.describe(&|_| "1".to_string())
                }
            }
        }
    }
}

fn reciprocal_sum(it: impl Iterator<Item = f64>) -> f64 {
    let s: f64 = it.map(|v| 1.0 / v).sum();
    1.0 / s
}

/// A parse error in a network expression.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("cannot read network {text:?}: {reason}")]
pub struct NetParseError {
    /// The expression as given.
    pub text: String,
    /// What went wrong.
    pub reason: String,
}

/// Parse a network expression such as `33k+2k2`, `10n||2n2`, `(10k||10k)+1k` or `10n//2n2`.
/// `+` is series, `||`, `//` or `∥` is parallel; parentheses group; without them parallel
/// binds tighter than series. A leaf may end in a bracketed part (`4k7[1%]`), handed to `leaf`
/// whole: operators inside brackets do not split it. Each leaf is handed to `leaf` and its result collected in order;
/// the returned tree indexes that list.
pub fn parse_net<T, E: fmt::Display>(
    text: &str,
    leaf: &mut dyn FnMut(&str) -> Result<T, E>,
) -> Result<(Net, Vec<T>), NetParseError> {
    let norm = text.replace("||", "∥").replace("//", "∥");
    let mut p = Parser {
        src: &norm,
        pos: 0,
        leaves: Vec::new(),
        orig: text,
    };
    let net = p.series(leaf)?;
    p.skip_ws();
    if p.pos != p.src.len() {
        return Err(p.error(format!("unexpected {:?}", &p.src[p.pos..])));
    }
    Ok((net, p.leaves))
}

struct Parser<'a, T> {
    src: &'a str,
    pos: usize,
    leaves: Vec<T>,
    orig: &'a str,
}

impl<T> Parser<'_, T> {
    fn error(&self, reason: String) -> NetParseError {
        NetParseError {
            text: self.orig.to_string(),
            reason,
        }
    }
    fn skip_ws(&mut self) {
        while self.src[self.pos..].starts_with(' ') {
            self.pos += 1;
        }
    }
    fn eat(&mut self, tok: &str) -> bool {
        self.skip_ws();
        if self.src[self.pos..].starts_with(tok) {
            self.pos += tok.len();
            true
        } else {
            false
        }
    }
    fn series<E: fmt::Display>(
        &mut self,
        leaf: &mut dyn FnMut(&str) -> Result<T, E>,
    ) -> Result<Net, NetParseError> {
        let mut items = vec![self.parallel(leaf)?];
        while self.eat("+") {
            items.push(self.parallel(leaf)?);
        }
        Ok(if items.len() == 1 {
            items.remove(0)
        } else {
            Net::Series(items)
        })
    }
    fn parallel<E: fmt::Display>(
        &mut self,
        leaf: &mut dyn FnMut(&str) -> Result<T, E>,
    ) -> Result<Net, NetParseError> {
        let mut items = vec![self.atom(leaf)?];
        while self.eat("∥") {
            items.push(self.atom(leaf)?);
        }
        Ok(if items.len() == 1 {
            items.remove(0)
        } else {
            Net::Parallel(items)
        })
    }
    fn atom<E: fmt::Display>(
        &mut self,
        leaf: &mut dyn FnMut(&str) -> Result<T, E>,
    ) -> Result<Net, NetParseError> {
        if self.eat("(") {
            let inner = self.series(leaf)?;
            if !self.eat(")") {
                return Err(self.error("missing closing parenthesis".into()));
            }
            return Ok(inner);
        }
        self.skip_ws();
        let rest = &self.src[self.pos..];
        // A leaf may carry its own tolerance in brackets (`4k7[1%]`, `10u[-20/+80%]`): nothing
        // inside the brackets is an operator.
        let mut in_brackets = false;
        let end = rest
            .char_indices()
            .find(|&(i, c)| {
                match c {
                    '[' => in_brackets = true,
                    ']' => in_brackets = false,
                    _ => {}
                }
                !in_brackets
                    && (c == '+' && !is_exponent_sign(rest, i) || c == '∥' || c == '(' || c == ')')
            })
            .map_or(rest.len(), |(i, _)| i);
        let token = rest[..end].trim();
        if token.is_empty() {
            return Err(self.error("a value is missing".into()));
        }
        let v = leaf(token).map_err(|e| self.error(e.to_string()))?;
        self.pos += end;
        self.leaves.push(v);
        Ok(Net::Piece(self.leaves.len() - 1))
    }
}

/// A `+` right after `e`/`E` that follows a digit is an exponent sign (`1e+3`), not series.
fn is_exponent_sign(s: &str, i: usize) -> bool {
    let b = s.as_bytes();
    i >= 2 && matches!(b[i - 1], b'e' | b'E') && b[i - 2].is_ascii_digit()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn num(s: &str) -> Result<f64, String> {
        s.parse::<f64>().map_err(|e| e.to_string())
    }

    #[test]
    fn a_bracketed_tolerance_stays_with_its_leaf() {
        let mut leaves = Vec::new();
        let (net, _) = parse_net("10u[-20/+80%] + 4u7[10%]||1u", &mut |s: &str| {
            leaves.push(s.to_string());
            Ok::<_, String>(())
        })
        .expect("parse");
        assert_eq!(leaves, ["10u[-20/+80%]", "4u7[10%]", "1u"]);
        assert_eq!(net.pieces(), 3);
    }

    #[test]
    fn series_and_parallel_of_resistors() {
        let (net, vals) = parse_net("100 + 200 || 200", &mut num).expect("parse");
        // common practice: series adds; two equal resistors in parallel halve.
        assert_eq!(net.value(&vals, Combine::Resistive), 200.0);
        assert_eq!(net.pieces(), 3);
    }

    #[test]
    fn capacitors_add_in_parallel() {
        let (net, vals) = parse_net("(1 // 1) + 2", &mut num).expect("parse");
        // common practice: parallel capacitors add; 2 F in series with 2 F is 1 F.
        assert!((net.value(&vals, Combine::Capacitive) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn describe_says_series_and_parallel_in_words() {
        let (net, vals) = parse_net("(1||2)+3", &mut num).expect("parse");
        let text = net.describe(&|i| vals[i].to_string());
        assert_eq!(text, "(1 in parallel with 2) in series with 3");
        for (expr, want) in [
            ("47+470", "47 in series with 470"),
            ("47||470", "47 in parallel with 470"),
            ("(1+2)||3", "(1 in series with 2) in parallel with 3"),
            ("1+2+3", "1 in series with 2 in series with 3"),
            ("5", "5"),
        ] {
            let (net, vals) = parse_net(expr, &mut num).expect("parse");
            let text = net.describe(&|i| vals[i].to_string());
            assert_eq!(text, want, "{expr}");
            assert!(!text.contains('+') && !text.contains('∥'), "{text}");
        }
    }

    #[test]
    fn wiring_names_the_shape_without_values() {
        for (expr, want) in [
            ("1", "single"),
            ("1+2", "2 in series"),
            ("1||2||3", "3 in parallel"),
            ("(1||2)+3", "(1 in parallel with 1) in series with 1"),
        ] {
            let (net, _) = parse_net(expr, &mut num).expect("parse");
            assert_eq!(net.wiring(), want, "{expr}");
        }
    }

    #[test]
    fn bad_expressions_are_errors() {
        for bad in ["", "1+", "(1+2", "1)", "1 ∥ x"] {
            assert!(parse_net(bad, &mut num).is_err(), "{bad:?} should fail");
        }
    }
}
