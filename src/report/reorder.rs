//! The buyer's list of `onhand reorder`: one priced list for one or several plans and the
//! low-stock refill, as text, JSON and spreadsheet CSV. Pure: the command converts its
//! arguments, runs the purchase program and hands the answer here as plain values.

use super::style::Style;
use super::table::Table;
use crate::model::{Kind, Technology, Value};
use serde::Serialize;

/// Where the prices come from, named on every report.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct PriceSource {
    /// The list's name (its file name, or the sample's).
    pub name: String,
    /// Whether it is the built-in invented sample.
    pub sample: bool,
    /// The currency code the list names ("XTS" for the sample, the ISO 4217 code for testing).
    pub currency: Option<String>,
}

impl PriceSource {
    /// "EUR", or "(no currency named)".
    pub fn currency_text(&self) -> &str {
        self.currency.as_deref().unwrap_or("(no currency named)")
    }
}

/// One plan the list covers.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct PlanLine {
    /// Plan name.
    pub name: String,
    /// Units wanted.
    pub units: u32,
    /// Units the stock alone builds (`None`: not worked out within the time limit).
    pub stock_alone_builds: Option<u32>,
}

/// One line to buy.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BuyLine {
    /// resistor or capacitor.
    pub kind: &'static str,
    /// Display text ("4.7 kΩ").
    pub value: String,
    /// The value in base units (Ω or F), exact decimal text.
    pub value_base: String,
    /// "Ω" or "F".
    pub base_unit: &'static str,
    /// Tolerance text ("1%").
    pub tolerance: String,
    /// Technology as a buyer writes it ("metal film", "C0G ceramic").
    pub technology: &'static str,
    /// The price-list series the value comes from.
    pub series: String,
    /// The supplier's part number, when the list has one.
    pub part_number: Option<String>,
    /// Packs to buy.
    pub packs: u32,
    /// Pieces per pack.
    pub pack_size: u32,
    /// Pieces the plans and the refill take of it.
    pub pieces_needed: u64,
    /// Of those, pieces for the low-stock refill.
    pub refill_pieces: u64,
    /// Price per pack, cents.
    pub price_per_pack_cents: u64,
    /// Cost of the line, cents.
    pub cost_cents: u64,
    /// What it is for: stage names, "refill #12".
    pub serves: String,
}

/// A low row the price list does not offer: listed, not priced.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Unpriced {
    /// Stock row id.
    pub part_id: i64,
    /// The part as listed.
    pub part: String,
    /// Pieces that bring it back to twice its low-stock level.
    pub pieces: u64,
}

/// Whether the list is proven the cheapest, and how far from it at most.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct Quality {
    /// Proven least cost over the candidates offered.
    pub proven: bool,
    /// Proven lower bound on the cost, cents (`None`: not reached).
    pub lower_bound_cents: Option<u64>,
}

/// The whole buyer's list.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BuyersList {
    /// The price list used.
    pub prices: PriceSource,
    /// The plans it covers (none for `--low` alone).
    pub plans: Vec<PlanLine>,
    /// Whether the low-stock refill is included.
    pub refill: bool,
    /// What to buy.
    pub lines: Vec<BuyLine>,
    /// Low rows the price list does not offer.
    pub unpriced: Vec<Unpriced>,
    /// Total, cents.
    pub total_cents: u64,
    /// The proof.
    pub quality: Quality,
}

impl BuyersList {
    /// The gap between the list and the proven bound, cents.
    pub fn gap_cents(&self) -> Option<u64> {
        self.quality
            .lower_bound_cents
            .map(|b| self.total_cents.saturating_sub(b))
    }
}

/// A technology as a buyer writes it on an order.
pub fn buyer_technology(t: Technology) -> &'static str {
    match t {
        Technology::MetalFilm => "metal film",
        Technology::CarbonFilm => "carbon film",
        Technology::ThickFilm => "thick film chip",
        Technology::Wirewound => "wirewound",
        Technology::C0g => "C0G ceramic",
        Technology::X7r => "X7R ceramic",
        Technology::Y5v => "Y5V ceramic",
        Technology::Film => "plastic film",
        Technology::Electrolytic => "aluminium electrolytic",
        Technology::Tantalum => "tantalum",
        Technology::Other => "other",
    }
}

/// An exact decimal from an integer count of `10^-digits` units: (1500, 3) → "1.5".
fn decimal(base: i64, digits: u32) -> String {
    let scale = 10i128.pow(digits);
    let b = i128::from(base);
    let (int, frac) = (b.abs() / scale, b.abs() % scale);
    let sign = if b < 0 { "-" } else { "" };
    if frac == 0 {
        return format!("{sign}{int}");
    }
    let f = format!("{frac:0width$}", width = digits as usize);
    format!("{sign}{int}.{}", f.trim_end_matches('0'))
}

/// The value in base units (Ω or F) as exact decimal text, and the unit.
pub fn base_value(v: Value) -> (String, &'static str) {
    match v {
        // Ohms count mΩ, Farads count fF (see units).
        Value::Resistance(r) => (decimal(r.base(), 3), "Ω"),
        Value::Capacitance(c) => (decimal(c.base(), 15), "F"),
        Value::None => (String::new(), ""),
    }
}

/// The kind's plain name.
pub fn kind_name(k: Kind) -> &'static str {
    k.as_str()
}

/// Cents as "12.34".
pub fn money(cents: u64) -> String {
    format!("{}.{:02}", cents / 100, cents % 100)
}

/// The line that names the price list, for every report.
pub fn price_line(p: &PriceSource) -> String {
    if p.sample {
        format!(
            "Prices: {} — INVENTED SAMPLE PRICES, not a supplier's; give --prices FILE for real ones. Currency {}.",
            p.name,
            p.currency_text()
        )
    } else {
        format!("Prices: {} (currency {}).", p.name, p.currency_text())
    }
}

/// The head of the text report: plans, prices, the table, the total and the proof.
pub fn list_text(l: &BuyersList, style: Style) -> String {
    let mut s = String::new();
    let mut say = |t: String| {
        s.push_str(&t);
        s.push('\n');
    };
    match l.plans.as_slice() {
        [] => say("Buyer's list: the low-stock refill".into()),
        plans => {
            let names: Vec<String> = plans
                .iter()
                .map(|p| format!("{:?} × {}", p.name, p.units))
                .collect();
            say(format!(
                "Buyer's list for {}{}",
                names.join(", "),
                if l.refill {
                    ", with the low-stock refill"
                } else {
                    ""
                }
            ));
            for p in plans {
                say(match p.stock_alone_builds {
                    Some(n) => format!(
                        "The stock alone builds {n} of {} units of {:?}.",
                        p.units, p.name
                    ),
                    None => format!(
                        "What the stock alone builds of {:?} was not worked out within the time limit.",
                        p.name
                    ),
                });
            }
        }
    }
    say(price_line(&l.prices));
    if l.lines.is_empty() {
        say("Nothing to buy.".into());
    } else {
        let mut t = Table::new([
            "value",
            "tolerance",
            "technology",
            "series",
            "part number",
            "packs",
            "needed",
            "per pack",
            "cost",
            "for",
        ])
        .right_aligned(&[5, 6, 7, 8]);
        for b in &l.lines {
            t.row([
                b.value.clone(),
                b.tolerance.clone(),
                b.technology.to_string(),
                b.series.clone(),
                b.part_number.clone().unwrap_or_default(),
                format!("{} × {}", b.packs, b.pack_size),
                b.pieces_needed.to_string(),
                money(b.price_per_pack_cents),
                money(b.cost_cents),
                b.serves.clone(),
            ]);
        }
        s.push('\n');
        s.push_str(&t.render(style));
        if !s.ends_with('\n') {
            s.push('\n');
        }
        let mut say = |t: String| {
            s.push_str(&t);
            s.push('\n');
        };
        say(format!(
            "Total {} {}.",
            money(l.total_cents),
            l.prices.currency_text()
        ));
    }
    if !l.unpriced.is_empty() {
        let mut t = Table::new(["#", "part", "pieces"]).right_aligned(&[2]);
        for u in &l.unpriced {
            t.row([u.part_id.to_string(), u.part.clone(), u.pieces.to_string()]);
        }
        s.push_str("\nLow rows the price list does not offer (buy these elsewhere):\n");
        s.push_str(&t.render(style));
        if !s.ends_with('\n') {
            s.push('\n');
        }
    }
    s
}

/// The proof line: proven least cost, or the gap to the proven bound.
pub fn quality_text(l: &BuyersList) -> String {
    if l.quality.proven {
        return "Proven least cost over the candidate designs offered.".into();
    }
    match (l.quality.lower_bound_cents, l.gap_cents()) {
        (Some(b), Some(g)) => {
            let pct = if l.total_cents > 0 {
                g as f64 * 100.0 / l.total_cents as f64
            } else {
                0.0
            };
            format!(
                "NOT proven least cost: the time limit stopped the integer program. Best list {} {cur}, proven bound {} {cur}: at most {} {cur} ({pct:.1} %) could be saved.",
                money(l.total_cents),
                money(b),
                money(g),
                cur = l.prices.currency_text()
            )
        }
        _ => "NOT proven least cost: the time limit stopped the integer program before it had a bound.".into(),
    }
}

/// The CSV header of the spreadsheet list.
pub const CSV_HEADER: [&str; 17] = [
    "kind",
    "value",
    "value_base",
    "base_unit",
    "tolerance",
    "technology",
    "series",
    "part_number",
    "pack_size",
    "packs",
    "pieces_needed",
    "refill_pieces",
    "price_per_pack",
    "cost",
    "currency",
    "for",
    "price_list",
];

/// The spreadsheet rows (cells not yet neutralised): one per line, then a total row.
pub fn csv_rows(l: &BuyersList) -> Vec<Vec<String>> {
    let cur = l.prices.currency.clone().unwrap_or_default();
    let list = if l.prices.sample {
        format!("{} (invented sample prices)", l.prices.name)
    } else {
        l.prices.name.clone()
    };
    let mut rows: Vec<Vec<String>> = l
        .lines
        .iter()
        .map(|b| {
            vec![
                b.kind.to_string(),
                b.value.clone(),
                b.value_base.clone(),
                b.base_unit.to_string(),
                b.tolerance.clone(),
                b.technology.to_string(),
                b.series.clone(),
                b.part_number.clone().unwrap_or_default(),
                b.pack_size.to_string(),
                b.packs.to_string(),
                b.pieces_needed.to_string(),
                b.refill_pieces.to_string(),
                money(b.price_per_pack_cents),
                money(b.cost_cents),
                cur.clone(),
                b.serves.clone(),
                list.clone(),
            ]
        })
        .collect();
    for u in &l.unpriced {
        let mut r = vec![String::new(); CSV_HEADER.len()];
        r[1] = u.part.clone();
        r[10] = u.pieces.to_string();
        r[11] = u.pieces.to_string();
        r[15] = format!("refill #{} (not in the price list)", u.part_id);
        r[16] = list.clone();
        rows.push(r);
    }
    let mut total = vec![String::new(); CSV_HEADER.len()];
    total[0] = "total".into();
    total[13] = money(l.total_cents);
    total[14] = cur;
    total[16] = list;
    rows.push(total);
    rows
}

/// How every unit is built with the purchase: per stage, its target and the designs in use.
/// `stages` gives each stage's share, its target text and its number of timer stages.
pub fn designs_text(
    parts: &[crate::model::Part],
    stages: &[(&crate::solve::plan::StageShare, String, usize)],
) -> String {
    let mut out: Vec<u8> = Vec::new();
    let _ = write_designs(&mut out, parts, stages);
    String::from_utf8_lossy(&out).into_owned()
}

fn write_designs(
    out: &mut Vec<u8>,
    parts: &[crate::model::Part],
    stages: &[(&crate::solve::plan::StageShare, String, usize)],
) -> std::io::Result<()> {
    use std::io::Write as _;
    if stages.is_empty() {
        return Ok(());
    }
    writeln!(out)?;
    writeln!(out, "With the purchase, every unit is built like this:")?;
    for (share, goal, n_stages) in stages {
        writeln!(out)?;
        writeln!(out, "Stage {:?} — {goal}", share.name)?;
        let mut first = 1u32;
        for (d, n) in &share.uses {
            let span = if *n == 1 {
                format!("unit {first}")
            } else {
                format!("units {first}–{}", first + n - 1)
            };
            writeln!(out, "  {span}:")?;
            super::find::write_design(out, parts, d, *n_stages)?;
            first += n;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::{Farads, Ohms};

    #[test]
    fn base_values_are_exact_decimals() {
        let (v, u) = base_value(Value::Capacitance(Farads::from_si(220e-9).expect("F")));
        assert_eq!((v.as_str(), u), ("0.00000022", "F"));
        let (v, u) = base_value(Value::Resistance(Ohms::from_si(12.4e3).expect("Ω")));
        assert_eq!((v.as_str(), u), ("12400", "Ω"));
        assert_eq!(decimal(1500, 3), "1.5");
    }
}
