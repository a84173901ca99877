//! The answers of `onhand series` (IEC 60063 preferred numbers): a look-up of one value (which
//! series hold it; nearest, next lower and next higher in each) and a decade or a range, as
//! typed data, text (tables through `report::table`) and the JSON shape. Pure.

use super::style::{JSON_SCHEMA, Style};
use super::table::Table;
use crate::units::eseries::{self, Series};
use crate::units::{BaseUnits, count};
use serde::Serialize;
use std::fmt::Display;
use std::fmt::Write as _;

/// One series' answer for a looked-up value.
#[derive(Debug, Serialize)]
pub struct SeriesAnswer {
    pub series: Series,
    pub contains: bool,
    pub nearest: Option<f64>,
    pub nearest_text: Option<String>,
    /// (nearest − value) / value, in percent.
    pub nearest_error_percent: Option<f64>,
    pub below: Option<f64>,
    pub below_text: Option<String>,
    pub above: Option<f64>,
    pub above_text: Option<String>,
}

/// The whole answer for a looked-up value.
#[derive(Debug, Serialize)]
pub struct Lookup {
    /// Version of the JSON schema.
    pub schema: u32,
    pub quantity: &'static str,
    pub value: f64,
    pub value_text: String,
    pub member_of: Vec<Series>,
    pub smallest_series: Option<Series>,
    pub series: Vec<SeriesAnswer>,
}

fn si<Q: BaseUnits>(q: Q) -> f64 {
    q.base() as f64 / 10f64.powi(Q::BASE_DIGITS as i32)
}

pub fn lookup<Q: BaseUnits + Display>(
    quantity: &'static str,
    x: Q,
    only: Option<Series>,
) -> Lookup {
    let list: Vec<Series> = match only {
        Some(s) => vec![s],
        None => Series::ALL.to_vec(),
    };
    let series = list
        .into_iter()
        .map(|s| {
            let n = eseries::nearest(s, x);
            let below = eseries::next_below(s, x);
            let above = eseries::next_above(s, x);
            let error = n.filter(|_| x.base() > 0).map(|n| {
                let e = (n.base() as f64 - x.base() as f64) / x.base() as f64 * 100.0;
                // Three significant digits are plenty for a report.
                let scale = 10f64.powi(2 - e.abs().log10().floor().max(-9.0) as i32);
                if e == 0.0 {
                    0.0
                } else {
                    (e * scale).round() / scale
                }
            });
            SeriesAnswer {
                series: s,
                contains: s.contains(x),
                nearest: n.map(si),
                nearest_text: n.map(|v| v.to_string()),
                nearest_error_percent: error,
                below: below.map(si),
                below_text: below.map(|v| v.to_string()),
                above: above.map(si),
                above_text: above.map(|v| v.to_string()),
            }
        })
        .collect();
    Lookup {
        schema: JSON_SCHEMA,
        quantity,
        value: si(x),
        value_text: x.to_string(),
        member_of: eseries::member_of(x),
        smallest_series: eseries::series_of(x),
        series,
    }
}

/// One decade or a range of a series.
#[derive(Debug, Serialize)]
pub struct SeriesTable {
    /// Version of the JSON schema.
    pub schema: u32,
    pub series: Series,
    pub per_decade: usize,
    pub significant_digits: u32,
    /// Null for E3 (meant for tolerances wider than ±20 %).
    pub usual_tolerance_percent: Option<f64>,
    /// The decade as the standard writes it: 10, 11, 12 … (E24) or 100, 102, 105 … (E96).
    pub base_numbers: Vec<u16>,
    /// Present for a range: "resistance" or "capacitance".
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quantity: Option<&'static str>,
    /// The decade from 1 (1.0, 1.1 …), or the values of the range in SI units.
    pub values: Vec<f64>,
    /// The same values as text.
    pub values_text: Vec<String>,
}

pub fn table(series: Series) -> SeriesTable {
    let digits = series.significant_digits();
    let values: Vec<f64> = series
        .table()
        .iter()
        .map(|&m| f64::from(m) / 100.0)
        .collect();
    let decimals = (digits - 1) as usize;
    SeriesTable {
        schema: JSON_SCHEMA,
        series,
        per_decade: series.per_decade(),
        significant_digits: digits,
        usual_tolerance_percent: series.usual_tolerance_percent(),
        base_numbers: series.base_numbers(),
        quantity: None,
        values_text: values.iter().map(|v| format!("{v:.decimals$}")).collect(),
        values,
    }
}

pub fn range<Q: BaseUnits + Display>(
    quantity: &'static str,
    series: Series,
    lo: Q,
    hi: Q,
) -> SeriesTable {
    let vals = eseries::values_between(series, lo, hi);
    SeriesTable {
        quantity: Some(quantity),
        values: vals.iter().map(|&v| si(v)).collect(),
        values_text: vals.iter().map(ToString::to_string).collect(),
        ..table(series)
    }
}

/// A look-up as text: which series hold the value, then one row per series.
pub fn lookup_text(l: &Lookup, style: Style) -> String {
    let mut out = String::new();
    // Writing into a String cannot fail.
    let _ = write_lookup(l, style, &mut out);
    out
}

fn write_lookup(l: &Lookup, style: Style, out: &mut String) -> std::fmt::Result {
    match l.smallest_series {
        Some(s) => {
            let all: Vec<String> = l.member_of.iter().map(ToString::to_string).collect();
            writeln!(
                out,
                "{} is a preferred value in {} (smallest series: {s}).",
                l.value_text,
                all.join(", ")
            )?;
        }
        None => writeln!(out, "{} is in no E-series.", l.value_text)?,
    }
    writeln!(out)?;
    let dash = || "—".to_string();
    let rows: Vec<[String; 5]> = l
        .series
        .iter()
        .map(|a| {
            [
                a.series.to_string(),
                a.nearest_text.clone().unwrap_or_else(dash),
                a.nearest_error_percent
                    .map_or_else(dash, |e| format!("{e:+} %").replace("+0 %", "0 %")),
                a.below_text.clone().unwrap_or_else(dash),
                a.above_text.clone().unwrap_or_else(dash),
            ]
        })
        .collect();
    let mut table = Table::new(["series", "nearest", "off by", "next below", "next above"]);
    for r in rows {
        table.row(r);
    }
    writeln!(out, "{}", table.render(style))?;
    Ok(())
}

/// A decade or a range as text.
pub fn table_text(t: &SeriesTable) -> String {
    let mut out = String::new();
    // Writing into a String cannot fail.
    let _ = write_table(t, &mut out);
    out
}

fn write_table(t: &SeriesTable, out: &mut String) -> std::fmt::Result {
    match t.quantity {
        None => {
            let sold = match t.usual_tolerance_percent {
                Some(p) => format!("usually sold at ±{p} % or better"),
                None => "meant for tolerances wider than ±20 %".to_string(),
            };
            writeln!(
                out,
                "{} (IEC 60063): {} values per decade, {sold}.",
                t.series, t.per_decade
            )?;
            for chunk in t.values_text.chunks(12) {
                writeln!(out, "{}", chunk.join("  "))?;
            }
        }
        Some(q) => {
            writeln!(
                out,
                "{} {q} values from {} to {}: {}",
                t.series,
                t.values_text.first().map_or("—", String::as_str),
                t.values_text.last().map_or("—", String::as_str),
                count(t.values_text.len(), "value", "values")
            )?;
            for v in &t.values_text {
                writeln!(out, "{v}")?;
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::{Farads, Ohms};

    #[test]
    fn lookup_of_a_resistance() {
        // IEC 60063 E12 around 5 kΩ: 4.7 k and 5.6 k.
        let l = lookup("resistance", Ohms::from_base(5_000_000), Some(Series::E12));
        assert_eq!(l.smallest_series, None);
        let a = &l.series[0];
        assert_eq!(a.nearest_text.as_deref(), Some("4.7 kΩ"));
        assert_eq!(a.below_text.as_deref(), Some("4.7 kΩ"));
        assert_eq!(a.above_text.as_deref(), Some("5.6 kΩ"));
        assert_eq!(a.nearest_error_percent, Some(-6.0));
        let text = lookup_text(&l, Style::PLAIN);
        assert!(text.contains("5 kΩ is in no E-series."), "{text}");
        assert!(text.contains("E12\t4.7 kΩ\t-6 %"), "{text}");
    }

    #[test]
    fn decade_and_range_text() {
        let text = table_text(&table(Series::E12));
        // IEC 60063 E12.
        assert!(
            text.contains("1.0  1.2  1.5  1.8  2.2  2.7  3.3  3.9  4.7  5.6  6.8  8.2"),
            "{text}"
        );
        let r = range(
            "capacitance",
            Series::E3,
            Farads::from_base(1_000_000),
            Farads::from_base(100_000_000),
        );
        assert!(
            table_text(&r).starts_with("E3 capacitance values from 1 nF to 100 nF: 7 values\n")
        );
        let one = range(
            "resistance",
            Series::E12,
            Ohms::from_base(4_700_000),
            Ohms::from_base(5_000_000),
        );
        assert!(
            table_text(&one).contains(": 1 value\n"),
            "{}",
            table_text(&one)
        );
        assert_eq!(
            r.values_text,
            [
                "1 nF", "2.2 nF", "4.7 nF", "10 nF", "22 nF", "47 nF", "100 nF"
            ]
        );
    }
}
