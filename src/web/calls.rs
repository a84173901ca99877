//! Every store call the server makes, in one place, so the rules stay the store's and the
//! handlers hold none of their own. Each function runs its store work on the pool (blocking
//! threads) and returns plain data. Rights that depend on the data (whose hold this is) are
//! checked here too, beside the call they guard.

use super::error::WebError;
use super::pool::Pool;
use crate::store::{
    Change, Hold, HoldChange, HoldFilter, ImportReport, Kind, LedgerEntry, LogEntry, LogFilter,
    Member, Part, PartFilter, Session, Value, read_csv,
};
use crate::units::{parse_capacitance, parse_resistance};
use serde::Serialize;

/// A stock search as typed on the page: a value as written on parts, a kind, a bin.
#[derive(Debug, Clone, Default, serde::Deserialize)]
pub struct StockQuery {
    /// `4k7`, `104`, `yellow violet red gold`, `100n`; or words found in the note.
    #[serde(default)]
    pub q: String,
    /// `resistor`, `capacitor`, `trimmer`, `diode` or empty.
    #[serde(default)]
    pub kind: String,
    /// An exact bin, or empty.
    #[serde(default)]
    pub bin: String,
    /// Only parts at or below their low-stock mark (`1`, `on`, `true`).
    #[serde(default)]
    pub low: String,
}

/// What a search found, and how the typed value was read.
#[derive(Debug, Clone, Serialize)]
pub struct Found {
    /// How the query text was understood, e.g. "104 read as 104 Ω or as 100 nF (code)".
    pub read_as: Vec<String>,
    /// Matching parts in stock order.
    pub parts: Vec<Part>,
}

fn on(flag: &str) -> bool {
    matches!(flag.trim(), "1" | "on" | "true" | "yes")
}

/// The filters a query stands for: one per way the value can be read (a bare `104` is both a
/// 104 Ω resistor and a 100 nF capacitor code), or a note search when it is no value at all.
pub fn filters_of(q: &StockQuery) -> Result<(Vec<PartFilter>, Vec<String>), WebError> {
    let kind = match q.kind.trim() {
        "" | "any" => None,
        k => Some(
            k.parse::<Kind>()
                .map_err(|e| WebError::BadInput(e.to_string()))?,
        ),
    };
    let base = PartFilter {
        kind,
        bin: Some(q.bin.trim().to_string()).filter(|b| !b.is_empty()),
        low: on(&q.low),
        ..PartFilter::default()
    };
    let text = q.q.trim();
    if text.is_empty() {
        return Ok((vec![base], Vec::new()));
    }
    if text.chars().count() > 100 || text.chars().any(char::is_control) {
        return Err(WebError::BadInput(
            "a search is at most 100 plain characters".into(),
        ));
    }
    let mut filters = Vec::new();
    let mut read_as = Vec::new();
    let resistive = !matches!(kind, Some(Kind::Capacitor | Kind::Diode));
    // A capacitance only when the text reads as one (`100n`, `2.2uF`) or is a three-digit
    // marking code (`104`, `472J`); `4k7` is never 4.7 kF.
    let digits =
        text.chars().take(3).filter(char::is_ascii_digit).count() == 3 && text.chars().count() <= 4;
    let capacitive = matches!(kind, None | Some(Kind::Capacitor))
        && (kind == Some(Kind::Capacitor)
            || digits
            || crate::store::text::infer_kind(text) == Kind::Capacitor);
    if resistive {
        if let Ok(r) = parse_resistance(text) {
            if r.is_positive() {
                read_as.push(format!("{text} read as {}", Value::Resistance(r)));
                filters.push(PartFilter {
                    value: Some(Value::Resistance(r)),
                    ..base.clone()
                });
            }
        }
    }
    if capacitive {
        if let Ok(c) = parse_capacitance(text) {
            if c.is_positive() {
                read_as.push(format!("{text} read as {}", Value::Capacitance(c)));
                filters.push(PartFilter {
                    value: Some(Value::Capacitance(c)),
                    ..base.clone()
                });
            }
        }
    }
    if filters.is_empty() {
        read_as.push(format!("{text:?} is no value; searching the notes"));
        filters.push(PartFilter {
            text: Some(text.to_string()),
            ..base
        });
    }
    Ok((filters, read_as))
}

/// Parts matching a stock search.
pub async fn search(pool: &Pool, q: &StockQuery) -> Result<Found, WebError> {
    let (filters, read_as) = filters_of(q)?;
    let parts = pool
        .run(move |s| {
            let mut all: Vec<Part> = Vec::new();
            for f in &filters {
                for p in s.parts(f)? {
                    if !all.iter().any(|a| a.id == p.id) {
                        all.push(p);
                    }
                }
            }
            Ok(all)
        })
        .await?;
    Ok(Found { read_as, parts })
}

/// One part with its holds and its history, newest first.
#[derive(Debug, Clone, Serialize)]
pub struct PartView {
    /// The part now.
    pub part: Part,
    /// Live holds of it.
    pub holds: Vec<Hold>,
    /// Its ledger, newest first (at most 100 entries).
    pub history: Vec<LedgerEntry>,
}

/// Most history lines a part page shows.
const HISTORY: usize = 100;

/// A part, its holds and history.
pub async fn part(pool: &Pool, id: i64) -> Result<PartView, WebError> {
    pool.run(move |s| {
        let part = s
            .parts(&PartFilter::default())?
            .into_iter()
            .find(|p| p.id == id)
            .ok_or(crate::store::StoreError::NoSuchPart(id))?;
        let holds = s.holds(&HoldFilter {
            part: Some(id),
            ..HoldFilter::default()
        })?;
        // The one ledger log (`store::log`, as `onhand log` reads it), newest first here.
        let history = s
            .log(&LogFilter {
                parts: vec![id],
                last: Some(HISTORY),
                ..LogFilter::default()
            })?
            .into_iter()
            .rev()
            .map(|l| l.entry)
            .collect();
        Ok(PartView {
            part,
            holds,
            history,
        })
    })
    .await
}

/// Take pieces off the shelf (free pieces only; the store refuses held ones).
pub async fn take(pool: &Pool, id: i64, qty: i64, who: &Member) -> Result<Change, WebError> {
    let who = who.name.clone();
    pool.run(move |s| s.as_member(&who, false, |s| s.take(id, qty, &who, "web: take")))
        .await
        .map_err(rights)
}

/// Put pieces back onto the row they came from.
pub async fn put_back(pool: &Pool, id: i64, qty: i64, who: &Member) -> Result<Change, WebError> {
    let who = who.name.clone();
    pool.run(move |s| s.as_member(&who, false, |s| s.put_back(id, qty, &who, "web: put back")))
        .await
        .map_err(rights)
}

/// Stock-take of one row (organisers).
pub async fn recount(pool: &Pool, id: i64, counted: i64, who: &Member) -> Result<Change, WebError> {
    organiser(who, "recount")?;
    let who = who.name.clone();
    pool.run(move |s| s.as_member(&who, true, |s| s.recount(id, counted, &who, "web: recount")))
        .await
        .map_err(rights)
}

/// Hold pieces of one part for `plan` (the member's own name when empty).
pub async fn hold_part(
    pool: &Pool,
    id: i64,
    qty: i64,
    plan: &str,
    who: &Member,
) -> Result<HoldChange, WebError> {
    let plan = if plan.trim().is_empty() {
        who.name.clone()
    } else {
        plan.trim().to_string()
    };
    let who = who.name.clone();
    pool.run(move |s| {
        s.as_member(&who, false, |s| {
            s.hold(&plan, "", &[(id, qty)], &who, "web: hold")
        })
    })
    .await
    .map_err(rights)
}

/// Hold a kit: the same pieces for each of `units` units of `plan`, one hold per unit
/// ("unit 1", "unit 2", …), all or nothing, so the kit can be used unit by unit.
pub async fn hold_kit(
    pool: &Pool,
    plan: &str,
    units: usize,
    items: &[(i64, i64)],
    who: &Member,
) -> Result<HoldChange, WebError> {
    if !(1..=500).contains(&units) {
        return Err(WebError::BadInput("a kit is 1 to 500 units".into()));
    }
    if items.is_empty() {
        return Err(WebError::BadInput("the kit names no parts".into()));
    }
    let names: Vec<String> = (1..=units).map(|u| format!("unit {u}")).collect();
    let items = items.to_vec();
    let plan = plan.trim().to_string();
    let who = who.name.clone();
    pool.run(move |s| {
        let asks: Vec<(&str, i64, i64)> = names
            .iter()
            .flat_map(|n| items.iter().map(move |&(id, q)| (n.as_str(), id, q)))
            .collect();
        s.as_member(&who, false, |s| {
            s.hold_for_members(&plan, &asks, &who, "web: hold kit")
        })
    })
    .await
    .map_err(rights)
}

/// A write refused in its own transaction because the member's rights went away meanwhile
/// (`Store::as_member`) is a 403, like any other missing right.
fn rights(e: WebError) -> WebError {
    match e {
        WebError::Store(crate::store::StoreError::Invalid(m))
            if m.contains("no longer has the rights") =>
        {
            WebError::Forbidden(m)
        }
        other => other,
    }
}

fn organiser(who: &Member, what: &str) -> Result<(), WebError> {
    if who.organiser {
        Ok(())
    } else {
        Err(WebError::Forbidden(format!("only an organiser may {what}")))
    }
}

/// The live holds of `plan` (and `member`) that `who` may not touch: someone else's, unless
/// `who` is an organiser.
fn not_theirs(holds: &[Hold], who: &str, organiser: bool) -> Vec<String> {
    if organiser {
        return Vec::new();
    }
    let mut others: Vec<String> = holds
        .iter()
        .filter(|h| h.who != who)
        .map(|h| h.who.clone())
        .collect();
    others.sort();
    others.dedup();
    others
}

/// Whether a release or use goes back to free stock or onto the boards.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Settle {
    /// Back to free stock.
    Release,
    /// Built in: off the shelf and out of the hold.
    Use,
}

/// Release or use the holds of `plan` (and `member`; all members when `None`). A member may
/// settle only holds they made; an organiser any. All or nothing, as the store does it.
pub async fn settle(
    pool: &Pool,
    how: Settle,
    plan: &str,
    member: Option<&str>,
    who: &Member,
) -> Result<HoldChange, WebError> {
    let plan = plan.trim().to_string();
    let member = member.map(|m| m.trim().to_string());
    let me = who.name.clone();
    let organiser = who.organiser;
    pool.run(move |s| {
        let holds = s.holds(&HoldFilter {
            plan: Some(plan.clone()),
            member: member.clone(),
            ..HoldFilter::default()
        })?;
        // Someone else's holds need an organiser, checked again in the write transaction.
        let others = not_theirs(&holds, &me, false);
        let need_organiser = !others.is_empty();
        if need_organiser && !organiser {
            return Err(crate::store::StoreError::Invalid(format!(
                "plan {plan:?} also holds pieces for {}; only they or an organiser may settle those",
                others.join(", ")
            )));
        }
        s.as_member(&me, need_organiser, |s| match how {
            Settle::Release => s.release(&plan, member.as_deref(), &[], &me, "web: release"),
            Settle::Use => s.use_held(&plan, member.as_deref(), None, &me, "web: use"),
        })
    })
    .await
    .map_err(rights)
    .map_err(|e| match e {
        WebError::Store(crate::store::StoreError::Invalid(m)) if m.contains("only they") => {
            WebError::Forbidden(m)
        }
        other => other,
    })
}

/// Holds with their parts: the member's own, or everyone's for an organiser who asks.
#[derive(Debug, Clone, Serialize)]
pub struct HoldsView {
    /// (hold, part) pairs, by plan, member and age.
    pub holds: Vec<(Hold, Part)>,
}

/// Live holds made by `who` (all holds when `everyone`).
pub async fn holds(pool: &Pool, who: &Member, everyone: bool) -> Result<HoldsView, WebError> {
    let me = who.name.clone();
    pool.run(move |s| {
        let parts = s.parts(&PartFilter::default())?;
        let holds = s
            .holds(&HoldFilter::default())?
            .into_iter()
            .filter(|h| everyone || h.who == me)
            .filter_map(|h| {
                let p = parts.iter().find(|p| p.id == h.part_id)?.clone();
                Some((h, p))
            })
            .collect();
        Ok(HoldsView { holds })
    })
    .await
}

/// Import CSV text (the `onhand import` format), or preview it with `dry_run` (organisers).
pub async fn import(
    pool: &Pool,
    csv: String,
    dry_run: bool,
    who: &Member,
) -> Result<ImportReport, WebError> {
    organiser(who, "import stock")?;
    if csv.trim().is_empty() {
        return Err(WebError::BadInput(
            "paste or choose a CSV file first".into(),
        ));
    }
    let who = who.name.clone();
    pool.run(move |s| {
        let records = read_csv(&csv)?;
        s.as_member(&who, true, |s| {
            s.import(&records, "web upload", &who, dry_run)
        })
    })
    .await
    .map_err(rights)
}

/// The ledger across the store with filters (organisers), through the one log function
/// (`Store::log`, as `onhand log`). `filter.since` and `filter.until` are as typed (a local
/// date, a date and time, or an age such as `7d`) and are read by `Store::time_bound` here.
pub async fn log(pool: &Pool, filter: LogFilter, who: &Member) -> Result<LogView, WebError> {
    organiser(who, "read the whole log")?;
    let typed = (filter.since.clone(), filter.until.clone());
    let (since, until) = pool
        .run(move |s| {
            let since = typed
                .0
                .as_deref()
                .map(|t| s.time_bound(t, false))
                .transpose()?;
            let until = typed
                .1
                .as_deref()
                .map(|t| s.time_bound(t, true))
                .transpose()?;
            Ok((since, until))
        })
        .await
        .map_err(|e| match e {
            // A time that cannot be read is bad input (400), not a refusal by the stock.
            WebError::Store(crate::store::StoreError::Invalid(m)) => WebError::BadInput(m),
            other => other,
        })?;
    let filter = LogFilter {
        since,
        until,
        ..filter
    };
    pool.run(move |s| {
        let mut entries = s.log(&filter)?;
        entries.reverse();
        let labels = entries
            .iter()
            .map(|e| format!("#{} {}", e.entry.part_id, e.part))
            .collect();
        Ok(LogView { entries, labels })
    })
    .await
}

/// Ledger entries with a label for each entry's part.
#[derive(Debug, Clone, Serialize)]
pub struct LogView {
    /// Newest first.
    pub entries: Vec<LogEntry>,
    /// `#3 4.7 kΩ 1% metal film` for each entry, same order.
    pub labels: Vec<String>,
}

/// Every member (organisers).
pub async fn members(pool: &Pool, who: &Member) -> Result<Vec<Member>, WebError> {
    organiser(who, "manage members")?;
    pool.run(|s| s.members()).await
}

/// Add a member with a password (organisers). The hash is made off the async threads.
pub async fn add_member(
    pool: &Pool,
    name: &str,
    organiser_right: bool,
    password: &str,
    who: &Member,
) -> Result<Member, WebError> {
    organiser(who, "manage members")?;
    let phc = hash(password).await?;
    let name = name.to_string();
    let me = who.name.clone();
    pool.run(move |s| {
        s.as_member(&me, true, |s| s.add_member(&name, organiser_right))?;
        s.set_member_password(&name, &phc)
    })
    .await
    .map_err(rights)
}

/// Remove a member (organisers; not oneself, so the cabinet keeps an organiser).
pub async fn remove_member(pool: &Pool, name: &str, who: &Member) -> Result<Member, WebError> {
    organiser(who, "manage members")?;
    if name.trim().eq_ignore_ascii_case(&who.name) {
        return Err(WebError::BadInput(
            "you cannot remove yourself here; use `onhand member remove`".into(),
        ));
    }
    let name = name.to_string();
    let me = who.name.clone();
    pool.run(move |s| s.as_member(&me, true, |s| s.remove_member(&name)))
        .await
        .map_err(rights)
}

async fn hash(password: &str) -> Result<String, WebError> {
    let password = password.to_string();
    tokio::task::spawn_blocking(move || super::auth::hash_password(&password))
        .await
        .map_err(|e| WebError::Internal(e.to_string()))?
        .map_err(|e| WebError::BadInput(e.to_string()))
}

/// Check a login; on success open a session and return (member, token, csrf). The password
/// check runs on a blocking thread; a missing account costs the same time as a wrong password.
pub async fn login(
    pool: &Pool,
    name: &str,
    password: &str,
    seconds: i64,
) -> Result<Option<(Member, String, String)>, WebError> {
    let n = name.to_string();
    let found = pool.run(move |s| s.member_with_password(&n)).await?;
    let password = password.to_string();
    let ok = tokio::task::spawn_blocking(move || match &found {
        Some((m, Some(phc))) if super::auth::verify_password(&password, phc) => Some(m.clone()),
        _ => {
            if found.is_none() {
                super::auth::verify_nothing(&password);
            }
            None
        }
    })
    .await
    .map_err(|e| WebError::Internal(e.to_string()))?;
    let Some(member) = ok else {
        return Ok(None);
    };
    let token = super::auth::new_token()?;
    let csrf = super::auth::new_token()?;
    let hash = super::auth::token_hash(&token);
    let (id, c) = (member.id, csrf.clone());
    pool.run(move |s| s.open_session(id, &hash, &c, seconds))
        .await?;
    Ok(Some((member, token, csrf)))
}

/// The live session for a cookie token, if any.
pub async fn session(pool: &Pool, token: &str) -> Result<Option<Session>, WebError> {
    let hash = super::auth::token_hash(token);
    pool.run(move |s| s.session(&hash)).await
}

/// End the session of this cookie token.
pub async fn logout(pool: &Pool, token: &str) -> Result<(), WebError> {
    let hash = super::auth::token_hash(token);
    pool.run(move |s| s.end_session(&hash)).await
}

/// The free stock snapshot the design search runs on (held pieces are not free).
pub async fn snapshot(pool: &Pool) -> Result<Vec<Part>, WebError> {
    pool.run(|s| s.available_parts()).await
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(text: &str, kind: &str) -> StockQuery {
        StockQuery {
            q: text.into(),
            kind: kind.into(),
            ..StockQuery::default()
        }
    }

    #[test]
    fn values_are_read_as_written_on_parts() {
        // 4k7: resistance only. Source: IEC 60062 letter-for-decimal-point code.
        let (f, read) = filters_of(&q("4k7", "")).expect("ok");
        assert_eq!(f.len(), 1);
        assert!(read[0].contains("4.7 kΩ"), "{read:?}");
        // 104: both a 104 Ω resistor and the capacitor code for 100 nF (IEC 60062).
        let (f, read) = filters_of(&q("104", "")).expect("ok");
        assert_eq!(f.len(), 2, "{read:?}");
        assert!(read.iter().any(|r| r.contains("100 nF")), "{read:?}");
        let (f, _) = filters_of(&q("104", "capacitor")).expect("ok");
        assert_eq!(f.len(), 1);
        // Colour bands: yellow violet red = 4.7 kΩ (IEC 60062 colour code).
        let (_, read) = filters_of(&q("yellow violet red gold", "")).expect("ok");
        assert!(read[0].contains("4.7 kΩ"), "{read:?}");
        // Not a value: a note search.
        let (f, _) = filters_of(&q("timing", "")).expect("ok");
        assert_eq!(f[0].text.as_deref(), Some("timing"));
        assert!(filters_of(&q("x", "blob")).is_err());
        assert!(filters_of(&q("a\u{0}b", "")).is_err());
    }

    #[test]
    fn only_own_holds_unless_organiser() {
        let h = |who: &str| Hold {
            id: 1,
            plan: "p".into(),
            member: String::new(),
            part_id: 1,
            quantity: 1,
            created_at: String::new(),
            who: who.into(),
            note: String::new(),
            age_seconds: 0,
        };
        let holds = vec![h("alice"), h("bob"), h("bob")];
        assert_eq!(not_theirs(&holds, "alice", false), vec!["bob".to_string()]);
        assert!(not_theirs(&holds, "alice", true).is_empty());
        assert!(not_theirs(&holds[..1], "alice", false).is_empty());
    }
}

/// The log filter as typed (every field text, so a bad one gets a clear message).
#[derive(Debug, Default, serde::Deserialize)]
pub struct LogQuery {
    /// Who wrote the entry.
    #[serde(default)]
    pub who: String,
    /// A part row, `7` or `#7`.
    #[serde(default)]
    pub part: String,
    /// A plan.
    #[serde(default)]
    pub plan: String,
    /// A unit of a plan (a hold's member, e.g. `unit 3`).
    #[serde(default)]
    pub unit: String,
    /// Text in the reason.
    #[serde(default)]
    pub why: String,
    /// From: a local date, a date and time, or an age (`7d`), as `onhand log --since`.
    #[serde(default)]
    pub since: String,
    /// Before, same forms.
    #[serde(default)]
    pub until: String,
    /// Most entries (the newest).
    #[serde(default)]
    pub limit: String,
}

impl LogQuery {
    /// The store filter (`store::LogFilter`, times still as typed: `calls::log` reads them);
    /// at most 500 entries unless a limit is given.
    pub fn filter(&self) -> Result<LogFilter, WebError> {
        let text = |s: &str| Some(s.trim().to_string()).filter(|t| !t.is_empty());
        let part = text(&self.part)
            .map(|p| super::routes::count(p.trim_start_matches('#'), "part"))
            .transpose()?;
        let limit = match text(&self.limit) {
            Some(l) => usize::try_from(super::routes::count(&l, "limit")?)
                .map_err(|_| WebError::BadInput("limit must be 0 or more".into()))?,
            None => 500,
        };
        Ok(LogFilter {
            who: text(&self.who),
            parts: part.into_iter().collect(),
            plan: text(&self.plan),
            member: text(&self.unit),
            why: text(&self.why),
            since: text(&self.since),
            until: text(&self.until),
            last: Some(limit),
        })
    }
}

/// What a plan file builds from the stock (the `onhand plan` computation), and, when the
/// member asked, what holding its units changed.
#[derive(Debug, Clone, Serialize)]
pub struct PlanView {
    /// The plan's name (the name its holds are kept under).
    pub name: String,
    /// Units wanted.
    pub wanted: u32,
    /// Units the stock builds.
    pub built: u32,
    /// What the count is proven over, in words (as `onhand plan` prints it).
    pub claim: String,
    /// Pieces the built units take: (part, pieces).
    pub takes: Vec<(Part, u64)>,
    /// Stages nothing in stock can meet.
    pub impossible: Vec<String>,
    /// The holds made, when the member asked to hold.
    pub held: Option<HoldChange>,
}

/// Most units a plan on the page may ask for (as a plan file allows).
const MOST_PLAN_UNITS: u32 = 10_000;

/// Plan a plan file's units against the stock as `onhand plan FILE [--units N]` does (the
/// plan's own holds count as free to it), and with `hold` hold the built units unit by unit
/// as `plan --hold` does (members `unit 1`, `unit 2`, …), recorded under `who` inside the
/// member guard. A file that cannot be read or planned is bad input, with nothing changed.
pub async fn plan(
    pool: &Pool,
    text: &str,
    units: Option<u32>,
    hold: bool,
    per_phase: std::time::Duration,
    who: &Member,
) -> Result<PlanView, WebError> {
    use crate::cli::{holds, plan};
    if text.trim().is_empty() {
        return Err(WebError::BadInput(
            "paste or choose a plan file first".into(),
        ));
    }
    let mut spec = plan::file::parse_plan(text).map_err(|e| WebError::BadInput(e.to_string()))?;
    if let Some(u) = units {
        if u == 0 || u > MOST_PLAN_UNITS {
            return Err(WebError::BadInput(format!(
                "units must be 1 … {MOST_PLAN_UNITS} (as in a plan file), not {u}"
            )));
        }
        spec.units = u;
    }
    let plan_name = spec.name.clone();
    let name = plan_name.clone();
    let parts = pool
        .run(move |s| holds::own_holds_free(s, s.parts(&PartFilter::default())?, &name))
        .await?;
    let (parts, answer) = tokio::task::spawn_blocking(move || {
        let limits = crate::solve::allocate::Limits {
            per_phase,
            ..Default::default()
        };
        // The same candidate count as `onhand plan`'s default.
        plan::plan_answer(&spec, &parts, 24, spec.variants, limits)
            .map(|(_, answer)| (parts, answer))
            .map_err(|e| WebError::BadInput(format!("{e:#}")))
    })
    .await
    .map_err(|e| WebError::Internal(e.to_string()))??;
    let held = if hold && answer.built > 0 {
        let name = plan_name.clone();
        let me = who.name.clone();
        let (p, a) = (parts.clone(), answer.clone());
        let change = pool
            .run(move |s| {
                s.as_member(&me, false, |s| {
                    holds::hold_plan_in(s, &me, &name, &p, &a).map_err(store_error)
                })
            })
            .await
            .map_err(rights)?;
        Some(change)
    } else {
        None
    };
    Ok(PlanView {
        name: plan_name,
        wanted: answer.wanted,
        built: answer.built,
        claim: plan::claim_text(
            answer.proof,
            &answer.cover,
            answer.units_bound_by.as_ref(),
            "fewest pieces",
        ),
        takes: answer
            .takes
            .iter()
            .filter_map(|&(row, n)| parts.get(row).map(|p| (p.clone(), n)))
            .collect(),
        impossible: answer.impossible.clone(),
        held,
    })
}

/// A plan hold's error as the store's own (so a busy database still retries), or its message.
fn store_error(e: anyhow::Error) -> crate::store::StoreError {
    use crate::store::StoreError;
    e.downcast::<StoreError>()
        .unwrap_or_else(|e| StoreError::Invalid(format!("{e:#}")))
}
