//! A small text schematic of a design: the timer package with every pin and what it connects
//! to, then each network placed between two named nodes.
//!
//! Pin numbers: the 8-pin single timer (1 GND, 2 TRIG, 3 OUT, 4 RESET, 5 CTRL, 6 THR, 7 DIS,
//! 8 VCC) and the 14-pin dual package (timer A: 1 DIS, 2 THR, 3 CTRL, 4 RESET, 5 OUT, 6 TRIG;
//! 7 GND; timer B: 8 TRIG, 9 OUT, 10 RESET, 11 CTRL, 12 THR, 13 DIS; 14 VCC) — the usual
//! industry pinout, `from memory`; check the data sheet of the part in hand.

use crate::timing::checks::{CONTROL_DECOUPLING, PAIR_COUPLING};
use crate::units::format_sig;
use std::fmt::Write as _;

/// The circuit around one timer.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Circuit {
    /// One-shot: R from the supply to THR/DIS, C from there to ground, TRIG from outside.
    Monostable,
    /// Classic astable: R1 supply→DIS, R2 DIS→THR/TRIG, C THR/TRIG→ground.
    Astable,
    /// Diode-steered astable: Ra supply→DIS, D1 DIS→cap (charge), Rb and D2 cap→DIS (discharge).
    Steered,
    /// Diode-steered astable with one diode: R1 supply→DIS, R2 DIS→THR/TRIG with a diode across
    /// it (anode at DIS) that carries the charge; discharge through R2 alone.
    SteeredBypass,
    /// Square wave: R from OUT to THR/TRIG, C to ground, DIS unused.
    Square,
}

/// What one stage of the schematic holds: its circuit and its networks as (name, text).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StageParts {
    /// Circuit form.
    pub circuit: Circuit,
    /// Networks in order R1/R, R2/Rb, C (names like "R1", values like "33 kΩ + 2.2 kΩ").
    pub parts: Vec<(String, String)>,
    /// The voltage the control pin is driven at (e.g. "5 V"); `None` leaves it to the internal
    /// divider, decoupled to ground.
    pub control: Option<String>,
}

/// Role of each pin of one timer: (pin name, what it connects to).
fn pin_roles(stage: &StageParts, tag: &str, trig_from: &str) -> Vec<(&'static str, String)> {
    let circuit = stage.circuit;
    let node_a = format!("cap {tag}").trim_end().to_string();
    let node_b = format!("dis {tag}").trim_end().to_string();
    let (trig, dis) = match circuit {
        Circuit::Monostable => (trig_from.to_string(), node_a.clone()),
        Circuit::Astable | Circuit::Steered | Circuit::SteeredBypass => {
            (node_a.clone(), node_b.clone())
        }
        Circuit::Square => (node_a.clone(), "not connected".to_string()),
    };
    vec![
        ("GND", "ground".to_string()),
        ("TRIG", trig),
        ("OUT", format!("output {tag}").trim_end().to_string()),
        ("RESET", "supply".to_string()),
        (
            "CTRL",
            stage.control.as_ref().map_or_else(
                || {
                    format!(
                        "{} to ground (decoupling)",
                        format_sig(CONTROL_DECOUPLING, 3, "F")
                    )
                },
                |v| format!("driven at {v}"),
            ),
        ),
        ("THR", node_a),
        ("DIS", dis),
        ("VCC", "supply".to_string()),
    ]
}

/// Where each network sits, as "between X and Y".
fn placements(stage: &StageParts, tag: &str) -> Vec<String> {
    let a = format!("cap {tag}").trim_end().to_string();
    let b = format!("dis {tag}").trim_end().to_string();
    let out = format!("output {tag}");
    let out = out.trim_end();
    let spots: Vec<String> = match stage.circuit {
        Circuit::Monostable => vec![
            format!("supply and {a} (THR, DIS)"),
            format!("{a} and ground"),
        ],
        Circuit::Astable => vec![
            format!("supply and {b} (DIS)"),
            format!("{b} (DIS) and {a} (THR, TRIG)"),
            format!("{a} and ground"),
        ],
        Circuit::Steered => vec![
            format!("supply and {b} (DIS); charge diode from {b} (anode) to {a}"),
            format!("{a} and the discharge diode, whose cathode goes to {b} (DIS)"),
            format!("{a} and ground"),
        ],
        Circuit::SteeredBypass => vec![
            format!("supply and {b} (DIS)"),
            format!("{b} (DIS) and {a} (THR, TRIG); a diode across it, anode at {b}"),
            format!("{a} and ground"),
        ],
        Circuit::Square => vec![
            format!("{out} (OUT) and {a} (THR, TRIG)"),
            format!("{a} and ground"),
        ],
    };
    stage
        .parts
        .iter()
        .zip(spots)
        .map(|((name, value), spot)| format!("  {name:<3} = {value:<24} between {spot}"))
        .collect()
}

fn package(left: &[(u8, &str, String)], right: &[(u8, &str, String)], title: &str) -> String {
    let lw = left
        .iter()
        .map(|(_, _, c)| c.chars().count())
        .max()
        .unwrap_or(0)
        .max(6);
    let inner = 15usize.max(title.chars().count() + 2);
    let mut s = String::new();
    let pad = " ".repeat(lw + 8);
    let _ = writeln!(s, "{pad}┌{:─^inner$}┐", format!(" {title} "));
    for ((ln, lname, lconn), (rn, rname, rconn)) in left.iter().zip(right) {
        let names = format!(" {lname:<6}{rname:>w$} ", w = inner - 8);
        let _ = writeln!(s, "  {lconn:>lw$} ──{ln:>2} ┤{names}├ {rn:<3}── {rconn}");
    }
    let _ = writeln!(s, "{pad}└{}┘", "─".repeat(inner));
    s
}

/// The schematic of one stage in the 8-pin package.
pub fn single(stage: &StageParts, supply: &str) -> String {
    let roles = pin_roles(stage, "", "trigger input (pull low to fire)");
    let conn = |i: usize| roles[i].1.replace("supply", supply);
    let left: Vec<(u8, &str, String)> =
        (0..4).map(|i| (i as u8 + 1, roles[i].0, conn(i))).collect();
    let right: Vec<(u8, &str, String)> = (4..8)
        .rev()
        .map(|i| (i as u8 + 1, roles[i].0, conn(i)))
        .collect();
    let mut s = package(&left, &right, "timer");
    for line in placements(stage, "") {
        let _ = writeln!(s, "{}", line.replace("supply", supply));
    }
    let _ = writeln!(
        s,
        "  (supply decoupling: 100 nF from VCC to GND close to the package — common practice)"
    );
    s
}

/// The schematic of two stages in the 14-pin dual package. When `chained`, output A triggers
/// stage B through a small coupling network so that B's trigger pulse stays short.
pub fn dual(a: &StageParts, b: &StageParts, supply: &str, chained: bool) -> String {
    let k = PAIR_COUPLING;
    let coupling = format!(
        "output A through {}, {} pull-up to supply{}",
        format_sig(k.capacitor, 3, "F"),
        format_sig(k.pull_up, 3, "Ω"),
        if k.clamp {
            ", clamp diode to supply (cathode at supply)"
        } else {
            ""
        }
    );
    let trig_b = if chained {
        coupling.as_str()
    } else {
        "trigger input B"
    };
    let ra = pin_roles(a, "A", "trigger input A");
    let rb = pin_roles(b, "B", trig_b);
    let f = |roles: &[(&'static str, String)], name: &str| -> String {
        roles
            .iter()
            .find(|(n, _)| *n == name)
            .map(|(_, c)| c.replace("supply", supply))
            .unwrap_or_default()
    };
    // Pin order of the dual package (see the module header).
    let left = vec![
        (1, "DIS", f(&ra, "DIS")),
        (2, "THR", f(&ra, "THR")),
        (3, "CTRL", f(&ra, "CTRL")),
        (4, "RESET", f(&ra, "RESET")),
        (5, "OUT", f(&ra, "OUT")),
        (6, "TRIG", f(&ra, "TRIG")),
        (7, "GND", "ground".to_string()),
    ];
    let right = vec![
        (14, "VCC", supply.to_string()),
        (13, "DIS", f(&rb, "DIS")),
        (12, "THR", f(&rb, "THR")),
        (11, "CTRL", f(&rb, "CTRL")),
        (10, "RESET", f(&rb, "RESET")),
        (9, "OUT", f(&rb, "OUT")),
        (8, "TRIG", f(&rb, "TRIG")),
    ];
    let mut s = package(&left, &right, "dual timer");
    let _ = writeln!(s, "  stage A:");
    for line in placements(a, "A") {
        let _ = writeln!(s, "{}", line.replace("supply", supply));
    }
    let _ = writeln!(s, "  stage B:");
    for line in placements(b, "B") {
        let _ = writeln!(s, "{}", line.replace("supply", supply));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    fn astable() -> StageParts {
        StageParts {
            circuit: Circuit::Astable,
            parts: vec![
                ("R1".into(), "4.7 kΩ".into()),
                ("R2".into(), "68 kΩ".into()),
                ("C".into(), "10 nF".into()),
            ],
            control: None,
        }
    }

    #[test]
    fn single_package_names_all_eight_pins_in_order() {
        let s = single(&astable(), "+9 V");
        for (pin, name) in [
            (1, "GND"),
            (2, "TRIG"),
            (3, "OUT"),
            (4, "RESET"),
            (5, "CTRL"),
            (6, "THR"),
            (7, "DIS"),
            (8, "VCC"),
        ] {
            assert!(
                s.lines()
                    .any(|l| l.contains(name) && l.contains(&format!("{pin}"))),
                "pin {pin} {name}:\n{s}"
            );
        }
        assert!(s.contains("R1  = 4.7 kΩ"));
        assert!(s.contains("between +9 V and dis (DIS)"));
    }

    #[test]
    fn dual_package_chains_output_a_to_trigger_b() {
        let mono = StageParts {
            circuit: Circuit::Monostable,
            parts: vec![("R3".into(), "10 kΩ".into()), ("C2".into(), "1 nF".into())],
            control: Some("5 V".into()),
        };
        let s = dual(&astable(), &mono, "+9 V", true);
        assert!(s.contains("14"));
        assert!(
            s.lines()
                .any(|l| l.contains("TRIG") && l.contains("output A through")),
            "{s}"
        );
        // Pin 11 is stage B's control pin, driven here; stage A's (pin 3) is decoupled.
        assert!(
            s.lines()
                .any(|l| l.contains("11") && l.contains("driven at 5 V")),
            "{s}"
        );
        assert!(
            s.lines()
                .any(|l| l.contains(" 3 ┤") && l.contains("10 nF to ground")),
            "{s}"
        );
    }
}
