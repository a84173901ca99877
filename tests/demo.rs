//! The README's main-job command: `onhand demo` runs the whole tour on the bundled sample stock
//! and writes its pictures where it says.

use crate::util::Bench;

#[test]
fn the_tour_runs_and_writes_valid_pictures() {
    let b = Bench::new();
    let dir = b.path("tour");
    let r = b
        .run(&["demo", "--pictures", dir.to_str().expect("utf-8")])
        .ok();
    for step in [
        "substitute",
        "one-shot",
        "astable",
        "steered",
        "Plan 25",
        "what to buy",
        "running low",
    ] {
        assert!(
            r.stdout.contains(step),
            "the tour lacks {step:?}:\n{}",
            r.stdout
        );
    }
    let dir = dir.canonicalize().expect("tour folder");
    assert!(
        r.stdout
            .contains(&format!("Files written to {}", dir.display())),
        "{}",
        r.stdout
    );
    let mut svgs = 0;
    for sub in ["astable", "one-shot", "steered"] {
        for entry in std::fs::read_dir(dir.join(sub)).expect("pictures folder") {
            let p = entry.expect("entry").path();
            let text = std::fs::read_to_string(&p).expect("read picture");
            let doc = roxmltree::Document::parse(&text)
                .unwrap_or_else(|e| panic!("{}: {e}", p.display()));
            assert_eq!(doc.root_element().tag_name().name(), "svg");
            svgs += 1;
        }
    }
    assert!(svgs >= 6, "only {svgs} pictures");
    assert!(dir.join("order.csv").exists());
    let reach = std::fs::read_to_string(dir.join("reach.svg")).expect("reach picture");
    roxmltree::Document::parse(&reach).expect("reach picture is valid SVG");
    // The demo never touches the bench's own database.
    assert!(!b.db().exists());
}
