//! `onhand demo`: a short tour on the bundled, invented sample stock.
//!
//! Every step is a real command run in-process against a throw-away database that the tour
//! fills from the sample CSVs compiled into the binary, so the demo needs no set-up and never
//! touches the user's own stock. Each step prints the command a user would type.

use super::{Cli, Context, FileWriter, Status, dispatch_with};
use anyhow::{Context as _, Result};
use clap::Parser as _;
use std::io::Write;
use std::path::{Path, PathBuf};

const BENCH_DRAWER: &str = include_str!("../../sample-stock/bench-drawer.csv");
const CABINET: &str = include_str!("../../sample-stock/makerspace-cabinet.csv");
const KIT: &str = include_str!("../../sample-stock/blinker-kit.toml");

/// Arguments of `demo`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Examples:\n  onhand demo\n  onhand demo --pictures /tmp/tour\n\n\
The tour uses invented sample stock (a repair bench drawer and a makerspace cabinet) in a\n\
throw-away database; your own stock database is not opened. Files of an earlier tour in the\n\
folder are replaced; nothing outside it is."
)]
pub struct DemoArgs {
    /// Folder for the pictures, netlists and lists the tour writes.
    #[arg(long, default_value = "onhand-demo", value_name = "DIR")]
    pictures: PathBuf,
}

/// One step of the tour: a heading, the command as the user would type it, then its output.
struct Tour<'a> {
    out: &'a mut dyn Write,
    db: PathBuf,
    user: String,
    step: usize,
    /// How the steps draw their tables (as the tour's own output).
    style: crate::report::style::Style,
    /// Every file of the tour goes through this writer: it may replace files of an earlier tour
    /// in the tour's own folder, and never writes onto the user's database.
    writer: FileWriter,
    /// (real path, what to show instead) — the sample files live in a temporary folder.
    shown_as: Vec<(String, String)>,
}

impl Tour<'_> {
    fn step(&mut self, title: &str, why: &str, args: &[&str]) -> Result<Status> {
        self.step += 1;
        writeln!(self.out)?;
        writeln!(self.out, "━━ {}. {title}", self.step)?;
        writeln!(self.out, "   {why}")?;
        let shown: Vec<String> = args
            .iter()
            .map(|a| {
                let a = self
                    .shown_as
                    .iter()
                    .find(|(real, _)| real == a)
                    .map_or(*a, |(_, s)| s.as_str());
                if a.contains(' ') {
                    format!("'{a}'")
                } else {
                    a.to_string()
                }
            })
            .collect();
        writeln!(self.out, "   $ onhand {}", shown.join(" "))?;
        writeln!(self.out)?;
        let mut argv: Vec<String> = vec![
            "onhand".into(),
            "--db".into(),
            self.db.display().to_string(),
            "--user".into(),
            self.user.clone(),
        ];
        argv.extend(args.iter().map(|a| (*a).to_string()));
        let cli = Cli::try_parse_from(&argv)
            .with_context(|| format!("demo step {}: {}", self.step, args.join(" ")))?;
        dispatch_with(cli, self.style, self.out, Some(self.writer.clone()))
    }

    /// Run a command quietly with `--json` and return what it printed (for a later step that
    /// hands on an earlier step's answer, as a user would copy it).
    fn quietly(&mut self, args: &[&str]) -> Result<serde_json::Value> {
        let mut argv: Vec<String> = vec![
            "onhand".into(),
            "--json".into(),
            "--db".into(),
            self.db.display().to_string(),
        ];
        argv.extend(args.iter().map(|a| (*a).to_string()));
        let cli = Cli::try_parse_from(&argv)
            .with_context(|| format!("demo, before step {}: {}", self.step + 1, args.join(" ")))?;
        let mut text = Vec::new();
        dispatch_with(
            cli,
            crate::report::style::Style::PLAIN,
            &mut text,
            Some(self.writer.clone()),
        )?;
        Ok(serde_json::from_slice(&text)?)
    }
}

/// `NAME=EXPRESSION` for each position of the first design of a `find --json` answer, with
/// `--tol NAME=…` for each piece's tolerance when a position is a single piece — the text
/// `check` reads back.
fn check_args_of(found: &serde_json::Value) -> Result<Vec<String>> {
    let positions = found["designs"][0]["positions"]
        .as_array()
        .ok_or_else(|| anyhow::anyhow!("the search found no design to hand on"))?;
    let mut args = Vec::new();
    for p in positions {
        let (Some(name), Some(expr)) = (p["name"].as_str(), p["expression"].as_str()) else {
            anyhow::bail!("a design position without its name or expression");
        };
        let check_name = match name {
            "Ra" => "RA",
            "Rb" => "RB",
            other => other,
        };
        // The expression carries each piece's tolerance (`5.6kΩ[±1%]`).
        args.push(format!("{check_name}={expr}"));
    }
    Ok(args)
}

/// A temporary directory removed on drop.
struct Scratch(PathBuf);

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn scratch() -> Result<Scratch> {
    let base = std::env::temp_dir();
    for n in 0..1000u32 {
        let p = base.join(format!("onhand-demo-{}-{n}", std::process::id()));
        if std::fs::create_dir(&p).is_ok() {
            return Ok(Scratch(p));
        }
    }
    anyhow::bail!("cannot make a temporary folder in {}", base.display())
}

fn path_arg(p: &Path) -> String {
    p.display().to_string()
}

/// Run the tour.
pub fn run(args: DemoArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    let tmp = scratch()?;
    let dir = &args.pictures;
    ctx.files().folder(dir)?;
    let dir = dir
        .canonicalize()
        .with_context(|| format!("resolving {}", dir.display()))?;
    let writer = ctx.files().replacing_within(&dir);
    let drawer = tmp.0.join("bench-drawer.csv");
    let cabinet = tmp.0.join("makerspace-cabinet.csv");
    let kit = tmp.0.join("blinker-kit.toml");
    let scratch_files = ctx.files();
    scratch_files.write(&drawer, BENCH_DRAWER.as_bytes())?;
    scratch_files.write(&cabinet, CABINET.as_bytes())?;
    scratch_files.write(&kit, KIT.as_bytes())?;
    let (drawer, cabinet, kit) = (path_arg(&drawer), path_arg(&cabinet), path_arg(&kit));
    let file = |name: &str| path_arg(&dir.join(name));

    writeln!(
        out,
        "onhand demo — a tour on invented sample stock (nothing here touches your own stock)."
    )?;
    writeln!(out, "Pictures, netlists and lists go to {}", dir.display())?;

    let shown_as = vec![
        (drawer.clone(), "sample-stock/bench-drawer.csv".to_string()),
        (
            cabinet.clone(),
            "sample-stock/makerspace-cabinet.csv".to_string(),
        ),
        (kit.clone(), "sample-stock/blinker-kit.toml".to_string()),
    ];
    let mut bench = Tour {
        out,
        db: tmp.0.join("bench.db"),
        user: ctx.user.clone(),
        step: 0,
        style: ctx.style,
        writer: writer.clone(),
        shown_as: shown_as.clone(),
    };
    bench.step(
        "Load the repair bench drawer",
        "An invented drawer: about 60 resistor values and 26 capacitors, with holes.",
        &["import", &drawer],
    )?;
    bench.step(
        "A substitute for a missing 10 kΩ ±1 %",
        "The drawer has no 10 kΩ; the fewest pieces that make one within 1 %:",
        &[
            "find",
            "value",
            "10k",
            "--within",
            "1%",
            "--alternatives",
            "2",
        ],
    )?;
    bench.step(
        "A one-shot of 500 ms",
        "A monostable (t = ln 3 · R · C) from what is in the drawer, within 2 %:",
        &[
            "find",
            "pulse",
            "500ms",
            "--within",
            "2%",
            "--alternatives",
            "1",
        ],
    )?;
    bench.step(
        "An astable at 1 kHz with 60–70 % duty",
        "The classic astable: the fewest pieces that keep both frequency and duty in their windows:",
        &["find", "astable", "1kHz", "--duty", "60..70%", "--within", "2%", "--alternatives", "1"],
    )?;
    bench.step(
        "Duty below 50 %: a diode-steered astable",
        "1 ms high and 4 ms low (20 % duty) needs separate charge and discharge paths:",
        &[
            "find",
            "steered",
            "--high",
            "1ms",
            "--low",
            "4ms",
            "--within",
            "2%",
            "--alternatives",
            "1",
        ],
    )?;
    bench.step(
        "What can this drawer reach?",
        "Every one-shot width the drawer's parts give (two pieces per position), the holes, and the purchase that closes each:",
        &["reach", "pulse", "--from", "10us", "--to", "10s", "--svg", &file("reach.svg")],
    )?;
    bench.step(
        "What does this board do? Check a design and draw it",
        "A repair tech's question, with worst case, Monte Carlo, checks, pictures and a SPICE netlist:",
        &[
            "check",
            "astable",
            "R1=6.8k",
            "R2=12k",
            "C=47n",
            "--tol",
            "R1=1%",
            "--tol",
            "R2=1%",
            "--tol",
            "C=5%",
            "--target",
            "1kHz",
            "--within",
            "10%",
            "--svg",
            &file("astable"),
            "--netlist",
            &file("astable.cir"),
        ],
    )?;
    bench.step(
        "A one-shot's waveform",
        "The design of step 3 (150 kΩ + 820 kΩ in series, 470 nF), checked and drawn:",
        &[
            "check",
            "monostable",
            "R=150k+820k",
            "C=470n",
            "--tol",
            "R=1%",
            "--tol",
            "C=5%",
            "--svg",
            &file("one-shot"),
        ],
    )?;
    // The design step 5 found, handed to check as a user would copy it from `find --json`.
    let steered = bench.quietly(&[
        "find", "steered", "--high", "1ms", "--low", "4ms", "--within", "2%",
    ])?;
    let mut check = vec!["check".to_string(), "steered".to_string()];
    check.extend(check_args_of(&steered)?);
    check.extend(["--svg".to_string(), file("steered")]);
    let check: Vec<&str> = check.iter().map(String::as_str).collect();
    bench.step(
        "And the steered astable's",
        "The design of step 5 handed to check: the same real-part model, so the same numbers, \
         now with the worst case, Monte Carlo and pictures:",
        &check,
    )?;

    let out = bench.out;
    let mut shop = Tour {
        out,
        db: tmp.0.join("cabinet.db"),
        user: ctx.user.clone(),
        step: bench.step,
        style: ctx.style,
        writer,
        shown_as,
    };
    shop.step(
        "Load the makerspace cabinet",
        "A larger, shared, invented cabinet with bins A1…F8 and low-stock levels.",
        &["import", &cabinet],
    )?;
    shop.step(
        "Plan 25 blinker kits for a class",
        "Three stages per kit (blink, beep, debounce); an integer program shares the cabinet across all units:",
        &["plan", &kit],
    )?;
    shop.step(
        "Sixty kits: what to buy",
        "The cabinet cannot build 60; the least-cost purchase from an invented price list makes it possible:",
        &["reorder", &kit, "--units", "60", "--csv", &file("order.csv")],
    )?;
    shop.step(
        "What is running low",
        "Rows at or below the low-stock level their owners set:",
        &["reorder", "--low"],
    )?;

    let out = shop.out;
    let mut written: Vec<String> = Vec::new();
    collect(&dir, &dir, &mut written)?;
    written.sort();
    writeln!(out)?;
    writeln!(out, "━━ Files written to {}:", dir.display())?;
    for f in &written {
        writeln!(out, "   {f}")?;
    }
    writeln!(
        out,
        "Open the .svg files in a browser; run a netlist with `ngspice -b astable.cir`."
    )?;
    Ok(Status::Success)
}

fn collect(root: &Path, dir: &Path, out: &mut Vec<String>) -> Result<()> {
    for entry in std::fs::read_dir(dir)? {
        let p = entry?.path();
        if p.is_dir() {
            collect(root, &p, out)?;
        } else {
            out.push(p.strip_prefix(root).unwrap_or(&p).display().to_string());
        }
    }
    Ok(())
}
