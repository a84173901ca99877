//! Values a technician types or reads off a part, stored exactly.
//!
//! Owns the quantity newtypes, their parsing (SI prefixes, IEC 60062 letter codes, capacitor
//! three-digit codes, chip-resistor markings behind `marking:`, resistor colour bands, tolerance
//! codes), their display in engineering form, and the IEC 60063 preferred-number series.
//! Pure: no I/O, no store, no physics.

mod colour;
mod decimal;
mod display;
pub mod eseries;
mod marking;
mod parse;
mod quantity;
mod tolerance;

#[cfg(test)]
mod tests;

pub use display::{
    Engineering, capacitance_text, count, decimal_text, format_sig, percent_text, time_text,
};
pub use eseries::Series;
pub use marking::{
    MARKING_PREFIX, MarkingForm, ResistorMarking, parse_resistor_marking, strip_marking_prefix,
};
pub use parse::{
    ParseError, parse_capacitance, parse_capacitor_marking, parse_colour_bands, parse_current,
    parse_frequency, parse_frequency_strict, parse_power, parse_ratio, parse_resistance,
    parse_si_number, parse_time, parse_time_strict, parse_tolerance, parse_voltage,
};
pub use quantity::{Amps, BaseUnits, Farads, Hertz, Ohms, Ratio, Seconds, Volts, Watts};
pub use tolerance::Tolerance;
