//! The price list a reorder is chosen from: user-editable CSV, one row per offer rule, each
//! expanded into every preferred value of its series between two bounds.
//!
//! ```csv
//! kind,series,technology,tolerance,from,to,pack,price
//! resistor,E24,metal_film,1%,10R,1M,100,1.80
//! capacitor,E6,film,5%,1n,1u,10,4.50
//! ```
//!
//! `price` is per pack, in the buyer's currency (two decimals; no symbol). `from`/`to` include
//! both ends. A value offered by several rows keeps the cheapest per piece. Two optional
//! columns: `currency` (an ISO 4217 code such as EUR; one for the whole list) and
//! `part_number` (the supplier's number; `{value}` in it is replaced by the value, e.g.
//! `MF1-{value}` → `MF1-4.7kΩ`).

use crate::store::{Kind, Technology, Value};
use crate::units::{self, Farads, Ohms, Tolerance, eseries, eseries::Series};
use std::collections::BTreeMap;

/// One value that can be bought.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Offer {
    /// Resistor or capacitor.
    pub kind: Kind,
    /// Exact value.
    pub value: Value,
    /// Tolerance of the bought part.
    pub tolerance: Tolerance,
    /// Technology.
    pub technology: Technology,
    /// The series it comes from.
    pub series: Series,
    /// Pieces per pack.
    pub pack: u32,
    /// Price per pack in cents.
    pub price_cents: u64,
    /// The supplier's part number, when the list has one.
    pub part_number: Option<String>,
}

/// A price list read from its text.
#[derive(Debug, Clone, PartialEq)]
pub struct PriceList {
    /// What the list is called on reports (its file name, or the sample's name).
    pub name: String,
    /// Whether this is the built-in invented sample.
    pub sample: bool,
    /// The currency code the list names, if any.
    pub currency: Option<String>,
    /// Every value that can be bought.
    pub offers: Vec<Offer>,
}

/// Read a price list; `name` is how reports call it.
pub fn read_price_list(text: &str, name: &str, sample: bool) -> Result<PriceList, PriceError> {
    let (offers, currency) = parse_list(text, None)?;
    Ok(PriceList {
        name: name.to_string(),
        sample,
        currency,
        offers,
    })
}

/// The finest preferred-value series bought per kind and technology. An offer is bought only
/// when its value is in that series or a coarser one (a cap of E96 allows E24 and E96 values).
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct BuySeries {
    every: Option<Series>,
    kinds: BTreeMap<Kind, Series>,
    techs: BTreeMap<Technology, Series>,
}

impl BuySeries {
    /// Parse `resistor=E96,capacitor=E6,film=E12` (kinds or technologies); a bare series
    /// (`E24`) sets every kind.
    pub fn parse(items: &[String]) -> Result<Self, PriceError> {
        let mut out = Self::default();
        for item in items.iter().map(|i| i.trim()).filter(|i| !i.is_empty()) {
            let bad = |why: String| {
                PriceError(format!(
                    "--buy-series {}: {why}",
                    crate::store::text::excerpt(item)
                ))
            };
            match item.split_once('=') {
                None => {
                    out.every = Some(item.parse().map_err(|e| bad(format!("{e}")))?);
                }
                Some((key, series)) => {
                    let series: Series = series.trim().parse().map_err(|e| bad(format!("{e}")))?;
                    let key = key.trim();
                    if let Ok(kind) = key.parse::<Kind>() {
                        out.kinds.insert(kind, series);
                    } else if let Ok(tech) = key.parse::<Technology>() {
                        out.techs.insert(tech, series);
                    } else {
                        return Err(bad(
                            "name a kind (resistor, capacitor) or a technology (film, electrolytic, …) before =".into(),
                        ));
                    }
                }
            }
        }
        Ok(out)
    }

    /// The finest series bought for an offer: the option's technology entry, then its kind
    /// entry, then a bare series, then the usual one (`common practice`): resistors by
    /// tolerance (E192 below 1 %, E96 at 1 %, E48 at 2 %, E24 up to 5 %, E12 above);
    /// ceramic, film and other capacitors E12; electrolytic and tantalum E6.
    pub fn finest(&self, kind: Kind, technology: Technology, tolerance: Tolerance) -> Series {
        if let Some(s) = self.techs.get(&technology) {
            return *s;
        }
        if let Some(s) = self.kinds.get(&kind) {
            return *s;
        }
        if let Some(s) = self.every {
            return s;
        }
        match kind {
            Kind::Resistor => {
                let pct = tolerance.widest().si() * 100.0;
                if pct < 0.99 {
                    Series::E192
                } else if pct < 1.99 {
                    Series::E96
                } else if pct < 4.99 {
                    Series::E48
                } else if pct < 5.01 {
                    Series::E24
                } else {
                    Series::E12
                }
            }
            _ if technology.is_electrolytic() => Series::E6,
            _ => Series::E12,
        }
    }

    /// Whether the offer's value is in its finest series or a coarser one.
    pub fn allows(&self, o: &Offer) -> bool {
        let cap = self.finest(o.kind, o.technology, o.tolerance).per_decade();
        Series::ALL
            .iter()
            .filter(|s| s.per_decade() <= cap)
            .any(|s| match o.value {
                Value::Resistance(r) => s.contains(r),
                Value::Capacitance(c) => s.contains(c),
                Value::None => false,
            })
    }
}

/// A price-list problem, naming the row and column.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct PriceError(pub String);

/// The most pieces in one pack (a sanity cap of ours: a reel of a million).
const MAX_PACK: u32 = 1_000_000;
/// The highest price of one pack, in cents (a sanity cap of ours: a million), so that a price
/// times any number of packs a plan buys stays exact.
const MAX_PRICE_CENTS: u64 = 100_000_000;

fn cents(text: &str) -> Option<u64> {
    let t = text.trim();
    let (int, frac) = t.split_once('.').unwrap_or((t, ""));
    if int.is_empty() && frac.is_empty()
        || frac.len() > 2
        || !int.chars().chain(frac.chars()).all(|c| c.is_ascii_digit())
    {
        return None;
    }
    let int: u64 = if int.is_empty() { 0 } else { int.parse().ok()? };
    let frac: u64 = if frac.is_empty() {
        0
    } else {
        format!("{frac:0<2}").parse().ok()?
    };
    int.checked_mul(100)?.checked_add(frac)
}

/// Parse a price list and expand it into offers, keeping only the series in `only` when given.
#[cfg(test)]
pub fn parse_prices(text: &str, only: Option<&[Series]>) -> Result<Vec<Offer>, PriceError> {
    parse_list(text, only).map(|l| l.0)
}

/// The offers and the currency the list names.
fn parse_list(
    text: &str,
    only: Option<&[Series]>,
) -> Result<(Vec<Offer>, Option<String>), PriceError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut rdr = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let headers: Vec<String> = rdr
        .headers()
        .map_err(|e| PriceError(format!("price list header: {e}")))?
        .iter()
        .map(|h| h.to_ascii_lowercase())
        .collect();
    const COLUMNS: [&str; 8] = [
        "kind",
        "series",
        "technology",
        "tolerance",
        "from",
        "to",
        "pack",
        "price",
    ];
    const OPTIONAL: [&str; 2] = ["currency", "part_number"];
    for h in &headers {
        if !COLUMNS.contains(&h.as_str()) && !OPTIONAL.contains(&h.as_str()) {
            return Err(PriceError(format!(
                "price list: unknown column {h:?} (expected {})",
                COLUMNS.join(",")
            )));
        }
    }
    let col = |name: &str| headers.iter().position(|h| h == name);
    let idx: Vec<usize> = COLUMNS
        .iter()
        .map(|c| col(c).ok_or_else(|| PriceError(format!("price list: column {c:?} is missing"))))
        .collect::<Result<_, _>>()?;
    let currency_col = col("currency");
    let number_col = col("part_number");
    let mut currency: Option<String> = None;
    let mut best: BTreeMap<(Kind, i64, Technology, Tolerance), Offer> = BTreeMap::new();
    for (i, rec) in rdr.records().enumerate() {
        let row = i + 1;
        let rec = rec.map_err(|e| PriceError(format!("price list row {row}: {e}")))?;
        let cell = |c: usize| rec.get(idx[c]).unwrap_or("");
        let bad = |c: usize, why: String| {
            PriceError(format!(
                "price list row {row}, column {}: {why}",
                COLUMNS[c]
            ))
        };
        if let Some(c) = currency_col {
            let code = rec.get(c).unwrap_or("").trim().to_ascii_uppercase();
            if !code.is_empty() {
                if code.len() != 3 || !code.chars().all(|ch| ch.is_ascii_uppercase()) {
                    return Err(PriceError(format!(
                        "price list row {row}, column currency: {} is not a three-letter code such as EUR",
                        crate::store::text::excerpt(&code)
                    )));
                }
                match &currency {
                    Some(c) if *c != code => {
                        return Err(PriceError(format!(
                            "price list row {row}, column currency: {code} after {c} (one currency per list)"
                        )));
                    }
                    _ => currency = Some(code),
                }
            }
        }
        let number = number_col
            .and_then(|c| rec.get(c))
            .map(str::trim)
            .filter(|t| !t.is_empty())
            .map(str::to_string);
        if let Some(n) = &number {
            crate::store::text::check_field("part_number", n, crate::store::text::MAX_NAME)
                .map_err(|e| {
                    PriceError(format!("price list row {row}, column part_number: {e}"))
                })?;
        }
        let kind: Kind = cell(0)
            .parse()
            .map_err(|e: crate::store::part::UnknownName| bad(0, e.to_string()))?;
        let series: Series = cell(1).parse().map_err(|e| bad(1, format!("{e}")))?;
        if only.is_some_and(|o| !o.contains(&series)) {
            continue;
        }
        let technology: Technology = cell(2)
            .parse()
            .map_err(|e: crate::store::part::UnknownName| bad(2, e.to_string()))?;
        let tolerance = units::parse_tolerance(cell(3)).map_err(|e| bad(3, e.to_string()))?;
        let pack: u32 = cell(6)
            .parse()
            .ok()
            .filter(|p| (1..=MAX_PACK).contains(p))
            .ok_or_else(|| {
                bad(
                    6,
                    format!(
                        "{} is not a whole number of pieces from 1 to {MAX_PACK}",
                        crate::store::text::excerpt(cell(6))
                    ),
                )
            })?;
        let price = cents(cell(7))
            .filter(|c| *c <= MAX_PRICE_CENTS)
            .ok_or_else(|| {
                bad(
                    7,
                    format!(
                        "{} is not a price such as 1.80 (at most {} per pack)",
                        crate::store::text::excerpt(cell(7)),
                        MAX_PRICE_CENTS / 100
                    ),
                )
            })?;
        let values: Vec<Value> = match kind {
            Kind::Resistor => {
                let lo: Ohms =
                    units::parse_resistance(cell(4)).map_err(|e| bad(4, e.to_string()))?;
                let hi: Ohms =
                    units::parse_resistance(cell(5)).map_err(|e| bad(5, e.to_string()))?;
                eseries::values_between(series, lo, hi)
                    .into_iter()
                    .map(Value::Resistance)
                    .collect()
            }
            Kind::Capacitor => {
                let lo: Farads =
                    units::parse_capacitance(cell(4)).map_err(|e| bad(4, e.to_string()))?;
                let hi: Farads =
                    units::parse_capacitance(cell(5)).map_err(|e| bad(5, e.to_string()))?;
                eseries::values_between(series, lo, hi)
                    .into_iter()
                    .map(Value::Capacitance)
                    .collect()
            }
            other => return Err(bad(0, format!("{other} cannot be ordered by series value"))),
        };
        if values.is_empty() {
            return Err(PriceError(format!(
                "price list row {row}: no {series:?} value between {} and {}",
                cell(4),
                cell(5)
            )));
        }
        for value in values {
            let key = (kind, value_base(value), technology, tolerance);
            let offer = Offer {
                kind,
                value,
                tolerance,
                technology,
                series,
                pack,
                price_cents: price,
                part_number: number.as_ref().map(|n| {
                    n.replace(
                        "{value}",
                        &crate::store::text::value_text(value).replace(' ', ""),
                    )
                }),
            };
            let cheaper = |o: &Offer| {
                u128::from(price) * u128::from(o.pack)
                    < u128::from(o.price_cents) * u128::from(pack)
            };
            match best.get(&key) {
                Some(o) if !cheaper(o) => {}
                _ => {
                    best.insert(key, offer);
                }
            }
        }
    }
    Ok((best.into_values().collect(), currency))
}

fn value_base(v: Value) -> i64 {
    match v {
        Value::Resistance(r) => r.base(),
        Value::Capacitance(c) => c.base(),
        Value::None => 0,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rules_expand_to_series_values_and_keep_the_cheapest() {
        let text = "kind,series,technology,tolerance,from,to,pack,price\n\
                    resistor,E12,metal_film,1%,1k,10k,100,1.50\n\
                    resistor,E24,metal_film,1%,1k,2k,10,0.90\n";
        let offers = parse_prices(text, None).expect("prices");
        // E12 1k..10k: 1, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2, 10 → 13 values
        // (IEC 60063); E24 1k..2k adds 1.1, 1.3, 1.6, 2.0 → 17 distinct.
        assert_eq!(offers.len(), 17);
        let one_k = offers
            .iter()
            .find(|o| o.value == Value::Resistance(Ohms::from_base(1_000_000)))
            .expect("1k");
        // 1.50 per 100 is cheaper per piece than 0.90 per 10.
        assert_eq!((one_k.pack, one_k.price_cents), (100, 150));
        // E24 alone, 1k..2k: 1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 (IEC 60063) → 8 values.
        let e24 = parse_prices(text, Some(&[Series::E24])).expect("E24 only");
        assert_eq!(e24.len(), 8);
    }

    #[test]
    fn mistakes_name_row_and_column() {
        let e = parse_prices("kind,series,technology,tolerance,from,to,pack,price\nresistor,E24,metal_film,1%,1k,10k,0,1.00\n", None)
            .expect_err("pack 0");
        assert!(e.0.contains("row 1, column pack"), "{e}");
        let e = parse_prices("kind,series,technology,tolerance,from,to,pack,price\nresistor,E24,metal_film,1%,1k,10k,10,1.005\n", None)
            .expect_err("price");
        assert!(e.0.contains("column price"), "{e}");
        assert!(parse_prices("kind,colour\n", None).is_err());
    }
}
