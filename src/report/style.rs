//! How reports look: box-drawn tables and colour on a terminal, plain tab-separated text
//! without colour when piped, asked for (`--plain`) or when `NO_COLOR` is set. The command layer
//! decides once (it alone knows where stdout goes) and hands a [`Style`] to the renderers; this
//! module only turns that decision into text. Also the one order of findings (most serious
//! first) and the version of the JSON schema. Pure; no I/O.

use crate::timing::Severity;

/// Version of the `--json` output schema, carried as a `schema` field where a command's JSON is
/// an object. Raised when a field changes meaning or is removed.
pub const JSON_SCHEMA: u32 = 1;

/// Column labels of Monte Carlo percentiles in every report: the 1st percentile, the median and
/// the 99th percentile (not "1 %", which reads as a tolerance).
pub const PERCENTILE_LABELS: [&str; 3] = ["P1", "median", "P99"];

/// How to draw a report.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Style {
    /// Box-drawing tables (a terminal) rather than tab-separated text (a pipe, `--plain`).
    pub boxes: bool,
    /// ANSI colour for errors, cautions and warnings.
    pub colour: bool,
}

impl Style {
    /// Plain text: tab-separated tables, no colour. What pipes and files get.
    pub const PLAIN: Style = Style {
        boxes: false,
        colour: false,
    };

    /// The style for an output: `terminal` whether it is one, `plain` whether `--plain` was
    /// given, `no_colour` whether `NO_COLOR` is set (to anything non-empty, as that convention
    /// says).
    pub fn choose(terminal: bool, plain: bool, no_colour: bool) -> Style {
        let boxes = terminal && !plain;
        Style {
            boxes,
            colour: boxes && !no_colour,
        }
    }

    /// `text` in the colour of `severity` when colour is on; unchanged otherwise.
    pub fn paint(self, severity: Severity, text: &str) -> String {
        if !self.colour {
            return text.to_string();
        }
        let code = match severity {
            Severity::Error => "1;31",   // bold red
            Severity::Caution => "1;35", // bold magenta
            Severity::Warning => "33",   // yellow
            Severity::Note => return text.to_string(),
        };
        format!("\u{1b}[{code}m{text}\u{1b}[0m")
    }

    /// The label of a severity as reports print it (`Error`, `Caution`, `Warning`, `Note`),
    /// painted.
    pub fn label(self, severity: Severity) -> String {
        let word = match severity {
            Severity::Error => "Error",
            Severity::Caution => "Caution",
            Severity::Warning => "Warning",
            Severity::Note => "Note",
        };
        self.paint(severity, word)
    }
}

/// Rank of a severity in reports: errors first, then cautions (someone can get hurt), then
/// warnings, then notes.
pub fn severity_rank(s: Severity) -> u8 {
    match s {
        Severity::Error => 0,
        Severity::Caution => 1,
        Severity::Warning => 2,
        Severity::Note => 3,
    }
}

/// Sort findings most serious first, keeping the order within one severity (stable).
pub fn sort_by_severity<T>(items: &mut [T], severity: impl Fn(&T) -> Severity) {
    items.sort_by_key(|t| severity_rank(severity(t)));
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn colour_only_on_a_terminal_without_no_color() {
        assert_eq!(
            Style::choose(true, false, false),
            Style {
                boxes: true,
                colour: true
            }
        );
        assert_eq!(Style::choose(false, false, false), Style::PLAIN);
        assert_eq!(Style::choose(true, true, false), Style::PLAIN);
        assert_eq!(
            Style::choose(true, false, true),
            Style {
                boxes: true,
                colour: false
            }
        );
    }

    #[test]
    fn paint_adds_codes_only_with_colour() {
        let on = Style::choose(true, false, false);
        assert_eq!(on.paint(Severity::Error, "x"), "\u{1b}[1;31mx\u{1b}[0m");
        assert_eq!(on.paint(Severity::Note, "x"), "x");
        assert_eq!(Style::PLAIN.paint(Severity::Error, "x"), "x");
        assert_eq!(Style::PLAIN.label(Severity::Caution), "Caution");
    }

    #[test]
    fn findings_sort_most_serious_first() {
        let mut v = vec![
            (Severity::Note, 1),
            (Severity::Warning, 2),
            (Severity::Error, 3),
            (Severity::Caution, 4),
            (Severity::Error, 5),
        ];
        sort_by_severity(&mut v, |x| x.0);
        let order: Vec<i32> = v.iter().map(|x| x.1).collect();
        assert_eq!(order, vec![3, 5, 4, 2, 1]);
    }
}
