//! `onhand series`: preferred-number look-ups (IEC 60063 E3 … E192). For one value: which series
//! hold it, and the nearest, next lower and next higher value in each series (or in one). With
//! `--table`: the values of one decade, or of a range, for assortments and catalogues.
//!
//! Needs no store. The arguments are read once into a [`Request`]; the look-ups are pure
//! (`units::eseries`), and the text and JSON renderers write to the given output.

use super::{Context, Status};
use crate::report::style::{JSON_SCHEMA, Style};
use crate::report::table::Table as Grid;
use crate::units::eseries::{self, Series};
use crate::units::{BaseUnits, Farads, Ohms, parse_capacitance, parse_resistance};
use anyhow::Context as _;
use serde::Serialize;
use std::fmt::Display;
use std::io::Write;

const EXAMPLES: &str = "\
Examples:
  onhand series 4k7                  which series hold 4.7 kΩ; nearest and neighbours in each
  onhand series 5k --series E12      nearest E12 value to 5 kΩ, and the ones either side
  onhand series 104 --capacitor      the same for a 100 nF capacitor (three-digit code)
  onhand series --table E24          the 24 values of one decade
  onhand series --table E12 --from 1k --to 100k   every E12 resistance in that range
  onhand --json series 4k7           machine-readable

Nearest is by ratio (the series are geometric); \"below\" and \"above\" are strictly below and
above the value. Values follow IEC 60063.";

/// Arguments of `series`.
#[derive(Debug, clap::Args)]
#[command(after_help = EXAMPLES)]
pub struct SeriesArgs {
    /// The value to look up: a resistance (4k7, 4.7 kΩ, 470R, yellow-violet-red-gold) or, with
    /// --capacitor, a capacitance (100n, 4n7, 0.1 µF, 104).
    #[arg(required_unless_present = "table", value_name = "VALUE")]
    pub value: Option<String>,
    /// Only this series: E3, E6, E12, E24, E48, E96 or E192. Default: every series.
    #[arg(long, short = 's', value_name = "SERIES")]
    pub series: Option<Series>,
    /// Read the values as capacitances instead of resistances.
    #[arg(long, short = 'c')]
    pub capacitor: bool,
    /// Print the values of SERIES for one decade (or, with --from and --to, over a range)
    /// instead of looking a value up.
    #[arg(long, value_name = "SERIES", conflicts_with_all = ["value", "series"])]
    pub table: Option<Series>,
    /// With --table: the lowest value of the range (included).
    #[arg(long, value_name = "VALUE", requires = "table", requires = "to")]
    pub from: Option<String>,
    /// With --table: the highest value of the range (included).
    #[arg(long, value_name = "VALUE", requires = "table", requires = "from")]
    pub to: Option<String>,
}

/// A resistance or a capacitance, as read from the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Value {
    Resistance(Ohms),
    Capacitance(Farads),
}

/// What `series` was asked to do, validated.
#[derive(Debug, Clone, PartialEq, Eq)]
enum Request {
    /// Look one value up, in every series or one.
    Lookup { value: Value, only: Option<Series> },
    /// One decade of a series.
    Decade(Series),
    /// Every value of a series in a range, both ends included.
    Range {
        series: Series,
        lo: Value,
        hi: Value,
    },
}

fn read_value(text: &str, capacitor: bool) -> anyhow::Result<Value> {
    if capacitor {
        let c = parse_capacitance(text)?;
        if !c.is_positive() {
            anyhow::bail!("a capacitance must be above zero (got {text:?})");
        }
        return Ok(Value::Capacitance(c));
    }
    match parse_resistance(text) {
        Ok(r) if !r.is_positive() => {
            anyhow::bail!("a resistance must be above zero (got {text:?})")
        }
        Ok(r) => Ok(Value::Resistance(r)),
        Err(e) => {
            if parse_capacitance(text).is_ok() {
                Err(anyhow::Error::new(e).context(format!(
                    "{text:?} looks like a capacitance: add --capacitor"
                )))
            } else {
                Err(e.into())
            }
        }
    }
}

impl Request {
    fn from_args(args: SeriesArgs) -> anyhow::Result<Self> {
        if let Some(series) = args.table {
            return match (args.from, args.to) {
                (Some(lo), Some(hi)) => Ok(Request::Range {
                    series,
                    lo: read_value(&lo, args.capacitor).context("--from")?,
                    hi: read_value(&hi, args.capacitor).context("--to")?,
                }),
                _ => Ok(Request::Decade(series)),
            };
        }
        let text = args
            .value
            .context("give a VALUE to look up, or --table SERIES")?;
        Ok(Request::Lookup {
            value: read_value(&text, args.capacitor)?,
            only: args.series,
        })
    }
}

/// One series' answer for a looked-up value.
#[derive(Debug, Serialize)]
struct SeriesAnswer {
    series: Series,
    contains: bool,
    nearest: Option<f64>,
    nearest_text: Option<String>,
    /// (nearest − value) / value, in percent.
    nearest_error_percent: Option<f64>,
    below: Option<f64>,
    below_text: Option<String>,
    above: Option<f64>,
    above_text: Option<String>,
}

/// The whole answer for a looked-up value.
#[derive(Debug, Serialize)]
struct Lookup {
    /// Version of the JSON schema.
    schema: u32,
    quantity: &'static str,
    value: f64,
    value_text: String,
    member_of: Vec<Series>,
    smallest_series: Option<Series>,
    series: Vec<SeriesAnswer>,
}

fn si<Q: BaseUnits>(q: Q) -> f64 {
    q.base() as f64 / 10f64.powi(Q::BASE_DIGITS as i32)
}

fn lookup<Q: BaseUnits + Display>(quantity: &'static str, x: Q, only: Option<Series>) -> Lookup {
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
struct Table {
    /// Version of the JSON schema.
    schema: u32,
    series: Series,
    per_decade: usize,
    significant_digits: u32,
    /// Null for E3 (meant for tolerances wider than ±20 %).
    usual_tolerance_percent: Option<f64>,
    /// The decade as the standard writes it: 10, 11, 12 … (E24) or 100, 102, 105 … (E96).
    base_numbers: Vec<u16>,
    /// Present for a range: "resistance" or "capacitance".
    #[serde(skip_serializing_if = "Option::is_none")]
    quantity: Option<&'static str>,
    /// The decade from 1 (1.0, 1.1 …), or the values of the range in SI units.
    values: Vec<f64>,
    /// The same values as text.
    values_text: Vec<String>,
}

fn table(series: Series) -> Table {
    let digits = series.significant_digits();
    let values: Vec<f64> = series
        .table()
        .iter()
        .map(|&m| f64::from(m) / 100.0)
        .collect();
    let decimals = (digits - 1) as usize;
    Table {
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

fn range<Q: BaseUnits + Display>(quantity: &'static str, series: Series, lo: Q, hi: Q) -> Table {
    let vals = eseries::values_between(series, lo, hi);
    Table {
        quantity: Some(quantity),
        values: vals.iter().map(|&v| si(v)).collect(),
        values_text: vals.iter().map(ToString::to_string).collect(),
        ..table(series)
    }
}

fn render_lookup(l: &Lookup, style: Style, out: &mut dyn Write) -> std::io::Result<()> {
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
    let mut table = Grid::new(["series", "nearest", "off by", "next below", "next above"]);
    for r in rows {
        table.row(r);
    }
    writeln!(out, "{}", table.render(style))?;
    Ok(())
}

fn render_table(t: &Table, out: &mut dyn Write) -> std::io::Result<()> {
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
                t.values_text.len()
            )?;
            for v in &t.values_text {
                writeln!(out, "{v}")?;
            }
        }
    }
    Ok(())
}

/// What `series` prints: a look-up or a table.
enum Answer {
    Lookup(Lookup),
    Table(Table),
}

/// Run `series`.
pub fn run(args: SeriesArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let answer = match Request::from_args(args)? {
        Request::Lookup {
            value: Value::Resistance(r),
            only,
        } => Answer::Lookup(lookup("resistance", r, only)),
        Request::Lookup {
            value: Value::Capacitance(c),
            only,
        } => Answer::Lookup(lookup("capacitance", c, only)),
        Request::Decade(s) => Answer::Table(table(s)),
        Request::Range {
            series,
            lo: Value::Resistance(lo),
            hi: Value::Resistance(hi),
        } => Answer::Table(range("resistance", series, lo, hi)),
        Request::Range {
            series,
            lo: Value::Capacitance(lo),
            hi: Value::Capacitance(hi),
        } => Answer::Table(range("capacitance", series, lo, hi)),
        Request::Range { .. } => {
            anyhow::bail!("--from and --to must both be resistances or both capacitances")
        }
    };
    match (&answer, ctx.json) {
        (Answer::Lookup(l), true) => serde_json::to_writer_pretty(&mut *out, l)?,
        (Answer::Table(t), true) => serde_json::to_writer_pretty(&mut *out, t)?,
        (Answer::Lookup(l), false) => render_lookup(l, ctx.style, out)?,
        (Answer::Table(t), false) => render_table(t, out)?,
    }
    if ctx.json {
        writeln!(out)?;
    }
    Ok(Status::Success)
}

#[cfg(test)]
mod tests {
    use super::*;

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
        let mut text = Vec::new();
        render_lookup(&l, Style::PLAIN, &mut text).expect("render");
        let text = String::from_utf8(text).expect("utf-8");
        assert!(text.contains("5 kΩ is in no E-series."), "{text}");
        assert!(text.contains("E12\t4.7 kΩ\t-6 %"), "{text}");
    }

    #[test]
    fn a_capacitance_without_the_flag_gets_a_hint() {
        let e = read_value("100nF", false).expect_err("not a resistance");
        assert!(format!("{e:#}").contains("--capacitor"), "{e:#}");
        assert_eq!(
            read_value("104", true).expect("code"),
            Value::Capacitance(Farads::from_base(100_000_000))
        );
    }

    fn request(argv: &[&str]) -> anyhow::Result<Request> {
        let cli = <crate::cli::Cli as clap::Parser>::try_parse_from(
            std::iter::once("onhand").chain(argv.iter().copied()),
        )?;
        match cli.command {
            crate::cli::Command::Series(args) => Request::from_args(args),
            other => anyhow::bail!("parsed as another command: {other:?}"),
        }
    }

    #[test]
    fn arguments_become_a_request() {
        assert_eq!(
            request(&["series", "4k7", "-s", "e24"]).expect("lookup"),
            Request::Lookup {
                value: Value::Resistance(Ohms::from_base(4_700_000)),
                only: Some(Series::E24)
            }
        );
        assert_eq!(
            request(&["series", "--table", "E96"]).expect("decade"),
            Request::Decade(Series::E96)
        );
        assert_eq!(
            request(&[
                "series", "--table", "E6", "--from", "1n", "--to", "1u", "-c"
            ])
            .expect("range"),
            Request::Range {
                series: Series::E6,
                lo: Value::Capacitance(Farads::from_base(1_000_000)),
                hi: Value::Capacitance(Farads::from_base(1_000_000_000)),
            }
        );
        for bad in [
            &["series"][..],
            &["series", "4k7", "--table", "E24"],
            &["series", "--table", "E24", "--from", "1k"],
            &["series", "--from", "1k", "--to", "2k"],
            &["series", "4k7", "-s", "E20"],
            &["series", "4k7k"],
            &["series", "4700", "-c"],
        ] {
            assert!(request(bad).is_err(), "{bad:?}");
        }
    }

    #[test]
    fn table_text() {
        let mut text = Vec::new();
        render_table(&table(Series::E12), &mut text).expect("render");
        let text = String::from_utf8(text).expect("utf-8");
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
        assert_eq!(
            r.values_text,
            [
                "1 nF", "2.2 nF", "4.7 nF", "10 nF", "22 nF", "47 nF", "100 nF"
            ]
        );
    }
}
