//! `onhand add`: put parts into stock.

use super::{Context, Status, describe};
use crate::store::{PartText, spec::FieldError};
use anyhow::bail;
use std::io::Write;

pub const EXAMPLES: &str = "\
Examples:
  onhand add 4.7k --qty 50 --bin A3            fifty 4.7 kΩ, 1 % metal film (the default)
  onhand add 100n --qty 20 --tech film --bin C2
  onhand add 10u --qty 5 --volts 25 --low 2    an electrolytic, warn at 2 left
  onhand add 1N4148 --qty 30                   a diode, known by its type number
  onhand add marking:472 --qty 100             a chip resistor printed 472: 4.7 kΩ
  onhand add '#7' --qty 3                      refill row 7 (e.g. after a mistaken take)

The kind follows the value: a diode type number (1N4148, BAT85) means a diode, a farad unit or
a p/n/u/µ multiplier a capacitor, anything else a resistor; --kind overrides. A bare 472 is
472 Ω; what is printed on a chip resistor is read only after marking: (marking:472 = 4.7 kΩ,
marking:4702 = 47 kΩ, marking:4R7 = 4.7 Ω, EIA-96 marking:01C = 10 kΩ). Unstated details take the usual defaults (common practice):
resistors 1 % metal film, axial, 0.25 W (colour bands: carbon film with the band's
tolerance, metal film at 1 % or tighter; a chip marking: thick film); capacitors C0G below 1 nF, X7R up to 1 µF,
electrolytic above, with that technology's usual tolerance.";

/// Arguments of `add`.
#[derive(Debug, clap::Args)]
pub struct AddArgs {
    /// The value: 4.7k, 100n, 2.2uF … (for a diode: its type, e.g. 1N4148).
    pub value: String,
    /// How many pieces.
    #[arg(long, allow_negative_numbers = true, value_name = "N")]
    pub qty: i64,
    /// resistor, capacitor, trimmer or diode (default: from the value).
    #[arg(long)]
    pub kind: Option<String>,
    /// Tolerance, e.g. 1%, 5%, -20/+80%.
    #[arg(long = "tol")]
    pub tolerance: Option<String>,
    /// Technology: metal_film, carbon_film, thick_film, wirewound, c0g, x7r, y5v, film,
    /// electrolytic, tantalum, other.
    #[arg(long = "tech")]
    pub technology: Option<String>,
    /// Voltage rating, e.g. 25 or 25V.
    #[arg(long)]
    pub volts: Option<String>,
    /// Power rating, e.g. 0.25 or 250mW.
    #[arg(long)]
    pub watts: Option<String>,
    /// Package, e.g. axial, 0805, radial.
    #[arg(long)]
    pub package: Option<String>,
    /// Storage bin, e.g. A3 or drawer-2.
    #[arg(long)]
    pub bin: Option<String>,
    /// Warn when the count falls to this level or below.
    #[arg(long, value_name = "N")]
    pub low: Option<String>,
    /// A free note.
    #[arg(long)]
    pub note: Option<String>,
    /// Reason for the ledger (default: "add").
    #[arg(long)]
    pub why: Option<String>,
}

/// `add '#7' --qty 3`: refill an existing row by its number.
fn add_to_row(a: AddArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let digits = a.value.trim().trim_start_matches('#');
    let Ok(id) = digits.parse::<i64>() else {
        bail!("{:?} is not a row number: write #7", a.value.trim());
    };
    let described = [
        &a.kind,
        &a.tolerance,
        &a.technology,
        &a.volts,
        &a.watts,
        &a.package,
    ]
    .iter()
    .chain([&a.bin, &a.low, &a.note].iter())
    .any(|o| o.is_some());
    if described {
        bail!("a row number names the part already: give only --qty (and --why)");
    }
    let qty = super::pieces("--qty", a.qty, 1, "")?;
    let mut store = super::open_for_writing(ctx)?;
    let why = super::reason(a.why, "add")?;
    let change = store.add_to_row(id, qty, &ctx.user, &why)?;
    if ctx.json {
        crate::cli::json::line(out, &change)?;
        return Ok(Status::Success);
    }
    writeln!(
        out,
        "added {} to {}: {} → {}",
        change.delta,
        describe(&change.part),
        change.before,
        change.part.quantity
    )?;
    for u in &change.updated {
        writeln!(out, "  also: {u}")?;
    }
    Ok(Status::Success)
}

/// Render field problems as one message, naming the options.
pub fn field_errors(errs: &[FieldError]) -> String {
    errs.iter()
        .map(|e| format!("{}: {}", e.field.option(), e.message))
        .collect::<Vec<_>>()
        .join("\n  ")
}

/// Run `add`.
pub fn run(a: AddArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    if a.value.trim().starts_with('#') {
        return add_to_row(a, ctx, out);
    }
    let text = PartText {
        kind: a.kind,
        value: a.value,
        tolerance: a.tolerance,
        technology: a.technology,
        volts: a.volts,
        watts: a.watts,
        package: a.package,
        bin: a.bin,
        low: a.low,
        note: a.note,
    };
    let spec = match text.resolve() {
        Ok(s) => s,
        Err(errs) => bail!("{}", field_errors(&errs)),
    };
    let qty = super::pieces("--qty", a.qty, 0, "use `onhand take` to remove parts")?;
    let why = super::reason(a.why, "add")?;
    let mut store = super::open_for_writing(ctx)?;
    let change = store.add(&spec, qty, &ctx.user, &why)?;
    if ctx.json {
        crate::cli::json::line(out, &change)?;
        return Ok(Status::Success);
    }
    let p = &change.part;
    if change.created {
        writeln!(out, "new row {}: {} on hand", describe(p), p.quantity)?;
    } else {
        writeln!(
            out,
            "added {} to {}: {} → {}",
            change.delta,
            describe(p),
            change.before,
            p.quantity
        )?;
    }
    for u in &change.updated {
        writeln!(out, "  also set {u}")?;
    }
    Ok(Status::Success)
}
