//! `onhand series`: preferred-number look-ups (IEC 60063 E3 … E192). For one value: which series
//! hold it, and the nearest, next lower and next higher value in each series (or in one). With
//! `--table`: the values of one decade, or of a range, for assortments and catalogues.
//!
//! Needs no store. The arguments are read once into a [`Request`]; the look-ups and their text
//! are pure (`report::series` over `units::eseries`); this layer prints them.

use super::{Context, Status};
use crate::report::series::{self as report, Lookup, SeriesTable, lookup, range, table};
use crate::units::eseries::Series;
use crate::units::{Farads, Ohms, parse_capacitance, parse_resistance};
use anyhow::Context as _;
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

/// What `series` prints: a look-up or a table.
enum Answer {
    Lookup(Lookup),
    Table(SeriesTable),
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
        (Answer::Lookup(l), false) => {
            out.write_all(report::lookup_text(l, ctx.style).as_bytes())?
        }
        (Answer::Table(t), false) => out.write_all(report::table_text(t).as_bytes())?,
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
}
