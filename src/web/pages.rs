//! The HTML pages, as compile-time checked maud templates. Every piece of text from the store
//! or the request is interpolated with `( … )`, which escapes it; the only unescaped markup is
//! the SVG our own picture renderer draws from numbers. No scripts, no outside assets: the
//! style sheet is inline and small, laid out for a phone first.

use super::calls::{Found, HoldsView, LogView, PartView, PlanView, StockQuery};
use super::design::{DesignForm, DesignResult};
use crate::store::{Hold, ImportReport, Member, Part};
use maud::{DOCTYPE, Markup, PreEscaped, html};

/// Who is looking, for the navigation and the forms.
#[derive(Debug, Clone, Copy)]
pub struct Who<'a> {
    /// The member logged in, if any.
    pub member: Option<&'a Member>,
    /// The session's anti-forgery token (empty without a session).
    pub csrf: &'a str,
}

const STYLE: &str = "\
*{box-sizing:border-box}body{font:16px/1.4 system-ui,sans-serif;margin:0;color:#111;background:#fafafa}\
header{background:#234;color:#fff;padding:.5rem .75rem;display:flex;flex-wrap:wrap;gap:.25rem .9rem;align-items:center}\
header a{color:#fff}header .me{margin-left:auto}main{padding:.75rem;max-width:60rem;margin:auto}\
table{border-collapse:collapse;width:100%;background:#fff}th,td{padding:.35rem .4rem;border-bottom:1px solid #ddd;text-align:left;vertical-align:top}\
td.n,th.n{text-align:right;font-variant-numeric:tabular-nums}.low{color:#a00;font-weight:bold}\
form.inline{display:inline}input,select,button,textarea{font:inherit;padding:.45rem;margin:.15rem 0}\
button{background:#246;color:#fff;border:0;border-radius:.3rem;padding:.5rem .9rem;min-height:2.6rem}\
button.quiet{background:#ddd;color:#111}.box{background:#fff;border:1px solid #ddd;border-radius:.4rem;padding:.6rem;margin:.6rem 0}\
.ok{background:#e7f6e7;border-color:#9c9}.err{background:#fde8e8;border-color:#d99}pre{white-space:pre-wrap;overflow-x:auto;font-size:.85rem}\
svg{max-width:100%;height:auto}.scroll{overflow-x:auto}label{display:inline-block;margin-right:.6rem}textarea{width:100%}";

/// The page frame: head, navigation, a message line, the content.
pub fn frame(title: &str, who: Who<'_>, note: Option<&str>, body: Markup) -> Markup {
    html! {
        (DOCTYPE)
        html lang="en" {
            head {
                meta charset="utf-8";
                meta name="viewport" content="width=device-width, initial-scale=1";
                title { (title) " · onhand" }
                style { (PreEscaped(STYLE)) }
            }
            body {
                header {
                    strong { "onhand" }
                    a href="/" { "Stock" }
                    @if who.member.is_some() {
                        a href="/holds" { "My holds" }
                        a href="/plan" { "Plan" }
                    }
                    a href="/design" { "Design" }
                    @if who.member.is_some_and(|m| m.organiser) {
                        a href="/import" { "Import" }
                        a href="/members" { "Members" }
                        a href="/log" { "Log" }
                    }
                    span.me {
                        @if let Some(m) = who.member {
                            span #me { (shown(&m.name)) }
                            " "
                            form.inline method="post" action="/logout" {
                                input type="hidden" name="csrf" value=(who.csrf);
                                button.quiet #logout type="submit" { "Log out" }
                            }
                        } @else {
                            a #login href="/login" { "Log in" }
                        }
                    }
                }
                main {
                    h1 { (title) }
                    @if let Some(n) = note {
                        p.box.ok #note { (n) }
                    }
                    (body)
                }
            }
        }
    }
}

/// An error page: what went wrong, nothing was changed, and a way back.
pub fn error(who: Who<'_>, message: &str, status: u16) -> Markup {
    frame(
        "Not done",
        who,
        None,
        html! {
            p.box.err #error { (message) }
            p { "Nothing was changed. (" (status) ")" }
            p { a href="/" { "Back to the stock" } }
        },
    )
}

/// The login form; `csrf` is the pre-login token also sent as a cookie.
pub fn login(csrf: &str, message: Option<&str>) -> Markup {
    frame(
        "Log in",
        Who {
            member: None,
            csrf: "",
        },
        None,
        html! {
            @if let Some(m) = message { p.box.err #error { (m) } }
            form.box method="post" action="/login" {
                input type="hidden" name="csrf" value=(csrf);
                p { label for="name" { "Name" } br; input #name name="name" autocomplete="username" required; }
                p { label for="password" { "Password" } br; input #password type="password" name="password" autocomplete="current-password" required; }
                button #go type="submit" { "Log in" }
            }
        },
    )
}

/// Store text as shown: control characters (which a note may hold) become U+FFFD, so nothing
/// invisible reaches the page; escaping happens in the template as for all text.
pub fn shown(s: &str) -> String {
    s.chars()
        .map(|c| if c.is_control() { '\u{FFFD}' } else { c })
        .collect()
}

/// A stored UTC time (`2026-12-01T23:42:07.277Z`) as `2026-12-01 23:42:07`, short enough for
/// a phone's table.
pub fn when(s: &str) -> String {
    s.chars()
        .take(19)
        .map(|c| if c == 'T' { ' ' } else { c })
        .collect()
}

fn free(p: &Part) -> i64 {
    p.quantity - p.held
}

fn is_low(p: &Part) -> bool {
    p.low_stock.is_some_and(|l| p.quantity <= l)
}

/// The stock search and its results.
pub fn stock(who: Who<'_>, q: &StockQuery, found: &Found) -> Markup {
    let kinds = ["", "resistor", "capacitor", "trimmer", "diode"];
    let body = html! {
        form.box method="get" action="/" {
            input #q name="q" value=(q.q) placeholder="4k7, 104, yellow violet red" aria-label="value";
            " "
            select name="kind" aria-label="kind" {
                @for k in kinds {
                    option value=(k) selected[q.kind == k] { @if k.is_empty() { "any kind" } @else { (k) } }
                }
            }
            " "
            input name="bin" value=(q.bin) placeholder="bin" size="5" aria-label="bin";
            " "
            label { input type="checkbox" name="low" value="1" checked[q.low == "1"]; " low only" }
            button #search type="submit" { "Search" }
        }
        @for r in &found.read_as { p.small { (r) } }
        (parts_table(&found.parts))
    };
    frame("Stock", who, None, body)
}

fn parts_table(parts: &[Part]) -> Markup {
    html! {
        @if parts.is_empty() {
            p #none { "No part in stock matches." }
        } @else {
            table #parts {
                thead { tr { th { "Part" } th { "Bin" } th.n { "Shelf" } th.n { "Held" } th.n { "Free" } } }
                tbody {
                    @for p in parts {
                        tr data-part=(p.id) {
                            td { a href={ "/part/" (p.id) } { (shown(&p.label())) } @if !p.note.is_empty() { br; small { (shown(&p.note)) } } }
                            td { (shown(&p.bin)) }
                            td.n.shelf { (p.quantity) }
                            td.n.held { (p.held) }
                            td.n.free { (free(p)) @if is_low(p) { " " span.low title="at or below its low-stock mark" { "low" } } }
                        }
                    }
                }
            }
        }
    }
}

fn csrf_field(who: Who<'_>) -> Markup {
    html! { input type="hidden" name="csrf" value=(who.csrf); }
}

fn count_form(who: Who<'_>, action: &str, label: &str, id: &str, extra: Markup) -> Markup {
    html! {
        form.box method="post" action=(action) {
            (csrf_field(who))
            input id=(format!("{id}-qty")) type="number" name="qty" min="1" value="1" inputmode="numeric" aria-label="pieces" style="width:6rem";
            " " (extra)
            button id=(id) type="submit" { (label) }
        }
    }
}

/// One part: counts, who holds it, the writes a member may make, and its history.
pub fn part(who: Who<'_>, v: &PartView, note: Option<&str>) -> Markup {
    let p = &v.part;
    let base = format!("/part/{}", p.id);
    let body = html! {
        table #counts {
            tr { th { "Bin" } td { (shown(&p.bin)) } }
            tr { th { "On the shelf" } td.n #shelf { (p.quantity) } }
            tr { th { "Held for plans" } td.n #held { (p.held) } }
            tr { th { "Free" } td.n #free { (free(p)) @if is_low(p) { " " span.low { "low" } } } }
            @if !p.note.is_empty() { tr { th { "Note" } td #part-note { (shown(&p.note)) } } }
        }
        h2 { "Who holds it" }
        @if v.holds.is_empty() {
            p #no-holds { "Nobody." }
        } @else {
            div.scroll { table #holds {
                tr { th { "Plan" } th { "Unit" } th.n { "Pieces" } th { "By" } th { "Since" } }
                @for h in &v.holds {
                    tr { td { (shown(&h.plan)) } td { (shown(&h.member)) } td.n { (h.quantity) } td.who { (shown(&h.who)) } td { (when(&h.created_at)) } }
                }
            } }
        }
        @if let Some(m) = who.member {
            (count_form(who, &format!("{base}/take"), "Take", "take", html! {}))
            (count_form(who, &format!("{base}/put-back"), "Put back", "put-back", html! {}))
            (count_form(who, &format!("{base}/hold"), "Hold", "hold", html! {
                input name="plan" placeholder={ "plan (default: " (shown(&m.name)) ")" } aria-label="plan" size="14";
                " "
            }))
            @if m.organiser {
                form.box method="post" action={ (base) "/recount" } {
                    (csrf_field(who))
                    input type="number" name="counted" min="0" value=(p.quantity) aria-label="counted" style="width:6rem";
                    " " button #recount type="submit" { "Recount" }
                }
            }
        } @else {
            p { a href="/login" { "Log in" } " to take, put back or hold." }
        }
        h2 { "History" }
        (history(&v.history, None))
    };
    frame(&format!("#{} {}", p.id, p.label()), who, note, body)
}

fn history(entries: &[crate::store::LedgerEntry], labels: Option<&[String]>) -> Markup {
    html! {
        div.scroll { table #history {
            tr { th { "When (UTC)" } @if labels.is_some() { th { "Part" } } th { "Who" } th { "What" } th.n { "Δ" } th.n { "After" } th.n { "Held Δ" } }
            @for (i, e) in entries.iter().enumerate() {
                tr {
                    td { (when(&e.at)) }
                    @if let Some(l) = labels { td { a href={ "/part/" (e.part_id) } { (l.get(i).map_or("", String::as_str)) } } }
                    td { (shown(&e.who)) }
                    td { (shown(&e.why)) @if let Some(plan) = &e.plan { " (" (shown(plan)) ")" } }
                    td.n { (e.delta) }
                    td.n { (e.quantity_after) }
                    td.n { (e.held_delta) }
                }
            }
        } }
    }
}

/// Holds of one (plan, unit), in listing order.
type Group<'a> = (&'a str, &'a str, Vec<&'a (Hold, Part)>);

/// The member's holds, by plan and unit, with use and release.
pub fn holds(who: Who<'_>, v: &HoldsView, all: bool, note: Option<&str>) -> Markup {
    // (plan, unit) groups in listing order.
    let mut groups: Vec<Group<'_>> = Vec::new();
    for hp in &v.holds {
        let (h, _) = hp;
        match groups
            .iter_mut()
            .find(|(p, m, _)| *p == h.plan && *m == h.member)
        {
            Some((_, _, g)) => g.push(hp),
            None => groups.push((&h.plan, &h.member, vec![hp])),
        }
    }
    let organiser = who.member.is_some_and(|m| m.organiser);
    let body = html! {
        @if organiser {
            p { @if all { a href="/holds" { "Only mine" } } @else { a href="/holds?all=1" { "Everyone's holds" } } }
        }
        @if groups.is_empty() {
            p #no-holds { "No holds. Hold parts from a part's page or from a design." }
        }
        @for (plan, unit, items) in &groups {
            div.box.plan {
                h2 { (shown(plan)) @if !unit.is_empty() { " · " (shown(unit)) } }
                table {
                    tr { th { "Part" } th { "Bin" } th.n { "Held" } th { "By" } }
                    @for (h, p) in items.iter().map(|x| (&x.0, &x.1)) {
                        tr { td { a href={ "/part/" (p.id) } { (shown(&p.label())) } } td { (shown(&p.bin)) } td.n { (h.quantity) } td { (shown(&h.who)) } }
                    }
                }
                form.inline method="post" action="/holds/use" {
                    (csrf_field(who))
                    input type="hidden" name="plan" value=(plan);
                    input type="hidden" name="member" value=(unit);
                    button type="submit" { "Use (built in)" }
                }
                " "
                form.inline method="post" action="/holds/release" {
                    (csrf_field(who))
                    input type="hidden" name="plan" value=(plan);
                    input type="hidden" name="member" value=(unit);
                    button.quiet type="submit" { "Release" }
                }
            }
        }
    };
    frame(
        if all { "Everyone's holds" } else { "My holds" },
        who,
        note,
        body,
    )
}

/// The design form and, after a search, the ranked report, the waveform and "hold these parts".
pub fn design(
    who: Who<'_>,
    f: &DesignForm,
    result: Option<&DesignResult>,
    parts: &[Part],
) -> Markup {
    let form = if f.form.is_empty() {
        "pulse"
    } else {
        f.form.as_str()
    };
    let body = html! {
        // The answer first: on a phone the form would push it below the fold.
        @if let Some(r) = result {
            // The waveform and the reach picture side by side where the screen is wide enough.
            @if !r.waveforms.is_empty() || !r.reach.is_empty() {
                div.pictures style="display:flex;flex-wrap:wrap;gap:.5rem" {
                    @for (i, svg) in r.waveforms.iter().enumerate() {
                        div.box.waveform id=(if i == 0 { "waveform".to_string() } else { format!("waveform-{}", i + 1) }) style="flex:1 1 20rem;min-width:0" { (PreEscaped(svg)) }
                    }
                    @for (i, svg) in r.reach.iter().enumerate() {
                        div.box.reach id=(if i == 0 { "reach".to_string() } else { format!("reach-{}", i + 1) }) style="flex:1 1 20rem;min-width:0" { (PreEscaped(svg)) }
                    }
                }
            }
            pre.box #report { (r.report) }
            @if !r.kit.is_empty() {
                @if who.member.is_some() {
                    form.box method="post" action="/design/hold" {
                        (csrf_field(who))
                        input type="hidden" name="kit" value=(kit_text(&r.kit));
                        p { "The best design uses: "
                            @for (i, (id, n)) in r.kit.iter().enumerate() {
                                @if i > 0 { ", " }
                                (n) " × " (parts.iter().find(|p| p.id == *id).map_or_else(|| format!("#{id}"), |p| format!("#{} {} ({})", p.id, p.label(), p.place())))
                            }
                        }
                        label { "plan " input name="plan" required placeholder="class kit" size="12"; }
                        label { "units " input type="number" name="units" min="1" max="500" value="1" style="width:5rem"; }
                        button #hold-kit type="submit" { "Hold these parts" }
                    }
                } @else {
                    p { a href="/login" { "Log in" } " to hold these parts." }
                }
            }
        }
        form.box method="get" action="/design" {
            p {
                label { input type="radio" name="form" value="pulse" checked[form == "pulse"]; " one-shot" }
                label { input type="radio" name="form" value="astable" checked[form == "astable"]; " astable" }
                label { input type="radio" name="form" value="steered" checked[form == "steered"]; " steered (duty < 50 %)" }
                label { input type="radio" name="form" value="square" checked[form == "square"]; " square (from the output)" }
                label { input type="radio" name="form" value="pair" checked[form == "pair"]; " pair (astable triggers a one-shot: frequency and width)" }
                label { input type="radio" name="form" value="dual" checked[form == "dual"]; " dual (two stages in one 556)" }
            }
            p {
                label { "width " input name="width" value=(f.width) placeholder="250ms" size="8"; }
                label { "frequency " input name="freq" value=(f.freq) placeholder="1kHz" size="8"; }
                label { "duty " input name="duty" value=(f.duty) placeholder="60..70%" size="8"; }
                label { "high " input name="high" value=(f.high) placeholder="1ms" size="7"; }
                label { "low " input name="low" value=(f.low) placeholder="200us" size="7"; }
            }
            p {
                label { "dual: first " input name="first" value=(f.first) placeholder="pulse:250ms" size="14"; }
                label { "second " input name="second" value=(f.second) placeholder="astable:2Hz" size="14"; }
            }
            p {
                label { "within " input name="tol" value=(f.tol) placeholder="1%" size="5"; }
                label { "supply " input name="vcc" value=(f.vcc) placeholder="9V" size="5"; }
                label { "family " select name="family" {
                    option value="bipolar" selected[f.family != "cmos"] { "bipolar" }
                    option value="cmos" selected[f.family == "cmos"] { "cmos" }
                } }
            }
            p.small { "Defaults as the command line: within 1 %, 9 V, bipolar family, real-part model (small-signal steering diodes, output drop, discharge saturation, bias-current band), up to 3 pieces per position, free stock only." }
            button #find type="submit" { "Find from the stock" }
        }
    };
    frame("Design", who, None, body)
}

/// `id:pieces,id:pieces` for the hold form.
pub fn kit_text(kit: &[(i64, i64)]) -> String {
    kit.iter()
        .map(|(id, n)| format!("{id}:{n}"))
        .collect::<Vec<_>>()
        .join(",")
}

/// The import form, and the preview or result of an import.
pub fn import(who: Who<'_>, csv: &str, report: Option<&ImportReport>) -> Markup {
    let body = html! {
        p { "Paste a CSV in the " code { "onhand import" } " format (header row: kind, value, tolerance, technology, volts, watts, package, bin, quantity, low, note). The preview changes nothing." }
        form.box method="post" action="/import" {
            (csrf_field(who))
            textarea #csv name="csv" rows="10" { (csv) }
            label { input type="checkbox" name="dry_run" value="1" checked[report.is_none_or(|r| r.dry_run)]; " preview only" }
            button #import type="submit" { "Import" }
        }
        @if let Some(r) = report {
            div.box.ok #import-report {
                p { @if r.dry_run { "Preview: would create " } @else { "Imported: created " } (r.created) " rows, top up " (r.topped_up) ", " (r.pieces) " pieces in all." }
                table {
                    tr { th.n { "Row" } th { "Part" } th { "Bin" } th.n { "Before" } th.n { "Adds" } }
                    @for l in &r.lines {
                        tr { td.n { (l.row) } td { (shown(&l.change.part.label())) @if l.change.created { " (new)" } } td { (shown(&l.change.part.bin)) } td.n { (l.change.before) } td.n { (l.change.delta) } }
                    }
                }
                @if r.more_lines > 0 {
                    p #import-more { "… and " (r.more_lines) " more rows (the table shows the first " (r.lines.len()) ")." }
                }
            }
        }
    };
    frame("Import stock", who, None, body)
}

/// A plan file pasted in: how many units the stock builds (the `onhand plan` count), what
/// they take, and a button to hold them unit by unit.
pub fn plan(who: Who<'_>, text: &str, units: &str, view: Option<&PlanView>) -> Markup {
    let body = html! {
        @if let Some(v) = view {
            div.box #plan-report .ok[v.built >= v.wanted] .err[v.built < v.wanted] {
                p #plan-built { "The stock builds " strong { (v.built) } " of " (v.wanted) " units of plan " (shown(&v.name)) "." }
                p { "(" (v.claim) ")" }
                @if !v.impossible.is_empty() {
                    p { "Nothing in stock meets: " (v.impossible.join(", ")) "." }
                }
                @if !v.takes.is_empty() {
                    table #plan-takes {
                        tr { th.n { "Pieces" } th { "Part" } th { "Bin" } th.n { "Free" } }
                        @for (p, n) in &v.takes {
                            tr { td.n { (n) } td { a href={ "/part/" (p.id) } { (shown(&p.label())) } } td { (shown(&p.bin)) } td.n { (p.available()) } }
                        }
                    }
                }
                @if v.built > 0 {
                    p { "Holding keeps each unit's kit apart (unit 1, unit 2, …) on " a href="/holds" { "My holds" } ", to use or release unit by unit. Pieces this plan already holds count, so holding again holds only what is missing." }
                }
            }
        }
        p { "Paste a plan file (the TOML that " code { "onhand plan FILE" } " reads: name, units, family, supply, then one [[stage]] per timer)." }
        form.box method="post" action="/plan" {
            (csrf_field(who))
            textarea #plan name="plan" rows="12" { (text) }
            p { label for="units" { "Units (empty: the file's)" } " " input #units name="units" inputmode="numeric" size="6" value=(units); }
            button #plan-count type="submit" { "Count units" }
            " "
            button #plan-hold type="submit" name="hold" value="1" { "Hold the units" }
        }
    };
    frame("Plan a kit", who, None, body)
}

/// The members, with add and remove.
pub fn members(who: Who<'_>, list: &[Member], note: Option<&str>) -> Markup {
    let body = html! {
        table #members {
            tr { th { "Name" } th { "Right" } th { "Password" } th {} }
            @for m in list {
                tr {
                    td { (shown(&m.name)) }
                    td { @if m.organiser { "organiser" } @else { "member" } }
                    td { @if m.has_password { "set" } @else { "not set" } }
                    td { @if who.member.is_none_or(|me| me.id != m.id) {
                        form.inline method="post" action="/members/remove" {
                            (csrf_field(who))
                            input type="hidden" name="name" value=(m.name);
                            button.quiet type="submit" { "Remove" }
                        }
                    } }
                }
            }
        }
        form.box method="post" action="/members" {
            (csrf_field(who))
            h2 { "Add a member" }
            input name="name" placeholder="name" required aria-label="name";
            " " input type="password" name="password" placeholder="password (8 or more)" required aria-label="password" autocomplete="new-password";
            " " label { input type="checkbox" name="organiser" value="1"; " organiser" }
            button type="submit" { "Add" }
        }
    };
    frame("Members", who, note, body)
}

/// The log across the store with its filters.
pub fn log(who: Who<'_>, f: &super::calls::LogQuery, v: &LogView) -> Markup {
    let entries: Vec<crate::store::LedgerEntry> =
        v.entries.iter().map(|e| e.entry.clone()).collect();
    let body = html! {
        form.box method="get" action="/log" {
            input name="who" value=(f.who) placeholder="member" size="10" aria-label="member";
            " " input name="part" value=(f.part) placeholder="part #" size="5" aria-label="part";
            " " input name="plan" value=(f.plan) placeholder="plan" size="10" aria-label="plan";
            " " input name="unit" value=(f.unit) placeholder="unit" size="8" aria-label="unit";
            " " input name="why" value=(f.why) placeholder="reason contains" size="12" aria-label="reason";
            " " input name="since" value=(f.since) placeholder="since 2026-12-01 or 7d" size="14" aria-label="since";
            " " input name="until" value=(f.until) placeholder="before" size="12" aria-label="until";
            " " button type="submit" { "Filter" }
        }
        p { (v.entries.len()) " entries, newest first." }
        (history(&entries, Some(&v.labels)))
    };
    frame("Log", who, None, body)
}
