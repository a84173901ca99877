//! The page routes: read the request, check rights and the anti-forgery token, call the store
//! through `calls`, render a page from `pages`. A write answers with a redirect to the page it
//! changed (so reloading never repeats it); a refusal answers with a page saying why, a 4xx
//! status, and nothing changed.

use super::calls::LogQuery;
use super::calls::{self, Settle, StockQuery};
use super::design::{self, DesignForm};
use super::error::WebError;
use super::{AppState, Viewer, auth, pages};
use axum::Router;
use axum::extract::{Form, Path, Query, State};
use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{Html, IntoResponse, Redirect, Response};
use axum::routing::{get, post};
use serde::Deserialize;

/// An error answered as a page (used where no viewer is known yet).
#[derive(Debug)]
pub struct PageError(WebError);

impl PageError {
    /// Wrap an error.
    pub fn bare(e: WebError) -> Self {
        PageError(e)
    }
}

impl IntoResponse for PageError {
    fn into_response(self) -> Response {
        page_error(None, self.0)
    }
}

fn page_error(v: Option<&Viewer>, e: WebError) -> Response {
    if matches!(e, WebError::LoginNeeded) {
        return Redirect::to("/login").into_response();
    }
    let who = v.map_or(
        pages::Who {
            member: None,
            csrf: "",
        },
        Viewer::who,
    );
    let body = pages::error(who, &e.to_string(), e.status().as_u16());
    e.finish(Html(body.into_string()).into_response())
}

fn finish(v: &Viewer, r: Result<Response, WebError>) -> Response {
    r.unwrap_or_else(|e| page_error(Some(v), e))
}

fn html(m: maud::Markup) -> Response {
    Html(m.into_string()).into_response()
}

/// Percent-encode for a query value.
fn enc(s: &str) -> String {
    s.bytes()
        .map(|b| {
            if b.is_ascii_alphanumeric() || b"-_.~".contains(&b) {
                (b as char).to_string()
            } else {
                format!("%{b:02X}")
            }
        })
        .collect()
}

fn done(path: &str, note: &str) -> Response {
    Redirect::to(&format!("{path}?done={}", enc(note))).into_response()
}

/// A whole number of pieces typed in a form.
pub fn count(text: &str, what: &str) -> Result<i64, WebError> {
    text.trim()
        .parse::<i64>()
        .map_err(|_| WebError::BadInput(format!("{what}: {:?} is not a whole number", text.trim())))
}

pub(super) fn pages() -> Router<AppState> {
    Router::new()
        .route("/", get(stock))
        .route("/login", get(login_form).post(login))
        .route("/logout", post(logout))
        .route("/part/{id}", get(part))
        .route("/part/{id}/{action}", post(part_write))
        .route("/holds", get(holds))
        .route("/holds/{action}", post(settle))
        .route("/design", get(design_page))
        .route("/design/hold", post(hold_kit))
        .route("/plan", get(plan_form).post(plan_file))
        .route("/import", get(import_form).post(import))
        .route("/members", get(members).post(add_member))
        .route("/members/remove", post(remove_member))
        .route("/log", get(log))
}

#[derive(Debug, Default, Deserialize)]
struct Note {
    #[serde(default)]
    done: Option<String>,
    #[serde(default)]
    all: Option<String>,
}

async fn stock(v: Viewer, State(st): State<AppState>, Query(q): Query<StockQuery>) -> Response {
    let r = async {
        v.may_read(&st.options)?;
        let found = calls::search(&st.pool, &q).await?;
        Ok(html(pages::stock(v.who(), &q, &found)))
    }
    .await;
    finish(&v, r)
}

async fn login_form() -> Response {
    let r: Result<Response, WebError> = (|| {
        let token = auth::new_token()?;
        let mut resp = html(pages::login(&token, None));
        resp.headers_mut().append(
            header::SET_COOKIE,
            auth::set_cookie(auth::LOGIN_COOKIE, &token, 3600, false),
        );
        Ok(resp)
    })();
    r.unwrap_or_else(|e| page_error(None, e))
}

#[derive(Debug, Default, Deserialize)]
struct LoginForm {
    #[serde(default)]
    name: String,
    #[serde(default)]
    password: String,
    #[serde(default)]
    csrf: String,
}

/// The throttle keys of one login attempt: the name, and the client address when known.
fn throttle_keys(name: &str, v: &Viewer) -> Vec<String> {
    let mut keys = vec![format!("name:{}", name.trim().to_lowercase())];
    if let Some(a) = v.addr {
        keys.push(format!("addr:{a}"));
    }
    keys
}

/// Check the throttle, then the password; count a failure or clear the keys.
pub(super) async fn check_login(
    st: &AppState,
    v: &Viewer,
    name: &str,
    password: &str,
) -> Result<Option<(crate::store::Member, String, String)>, WebError> {
    let keys = throttle_keys(name, v);
    for k in &keys {
        st.throttle.check(k).map_err(WebError::Throttled)?;
    }
    let found = calls::login(&st.pool, name, password, st.options.session_seconds).await?;
    for k in &keys {
        match found {
            Some(_) => st.throttle.clear(k),
            None => st.throttle.fail(k),
        }
    }
    Ok(found)
}

/// The `Set-Cookie` header of a new session.
pub(super) fn session_cookie(st: &AppState, token: &str) -> HeaderValue {
    auth::set_cookie(
        auth::SESSION_COOKIE,
        token,
        st.options.session_seconds,
        st.options.secure_cookies,
    )
}

async fn login(
    v: Viewer,
    State(st): State<AppState>,
    headers: axum::http::HeaderMap,
    Form(f): Form<LoginForm>,
) -> Response {
    let r = async {
        let pre = auth::cookie(&headers, auth::LOGIN_COOKIE).unwrap_or_default();
        if !auth::same_token(&pre, &f.csrf) {
            return Err(WebError::BadCsrf);
        }
        match check_login(&st, &v, &f.name, &f.password).await? {
            Some((_, token, _)) => {
                let mut resp = Redirect::to("/").into_response();
                let h = resp.headers_mut();
                h.append(header::SET_COOKIE, session_cookie(&st, &token));
                h.append(
                    header::SET_COOKIE,
                    auth::set_cookie(auth::LOGIN_COOKIE, "", 0, false),
                );
                Ok(resp)
            }
            None => {
                let mut resp = html(pages::login(&f.csrf, Some("Wrong name or password.")));
                *resp.status_mut() = StatusCode::UNAUTHORIZED;
                Ok(resp)
            }
        }
    }
    .await;
    finish(&v, r)
}

#[derive(Debug, Default, Deserialize)]
struct CsrfForm {
    #[serde(default)]
    csrf: String,
}

async fn logout(v: Viewer, State(st): State<AppState>, Form(f): Form<CsrfForm>) -> Response {
    let r = async {
        v.writer(Some(&f.csrf))?;
        if let Some(t) = &v.token {
            calls::logout(&st.pool, t).await?;
        }
        let mut resp = Redirect::to("/login").into_response();
        resp.headers_mut().append(
            header::SET_COOKIE,
            auth::set_cookie(auth::SESSION_COOKIE, "", 0, st.options.secure_cookies),
        );
        Ok(resp)
    }
    .await;
    finish(&v, r)
}

async fn part(
    v: Viewer,
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Query(n): Query<Note>,
) -> Response {
    let r = async {
        v.may_read(&st.options)?;
        let view = calls::part(&st.pool, id).await?;
        Ok(html(pages::part(v.who(), &view, n.done.as_deref())))
    }
    .await;
    finish(&v, r)
}

#[derive(Debug, Default, Deserialize)]
struct PartWrite {
    #[serde(default)]
    csrf: String,
    #[serde(default)]
    qty: String,
    #[serde(default)]
    plan: String,
    #[serde(default)]
    counted: String,
}

async fn part_write(
    v: Viewer,
    State(st): State<AppState>,
    Path((id, action)): Path<(i64, String)>,
    Form(f): Form<PartWrite>,
) -> Response {
    let r = async {
        let me = v.writer(Some(&f.csrf))?;
        let page = format!("/part/{id}");
        let note = match action.as_str() {
            "take" => {
                let c = calls::take(&st.pool, id, count(&f.qty, "pieces")?, me).await?;
                format!(
                    "Took {} × {}; {} left on the shelf.",
                    -c.delta,
                    c.part.label(),
                    c.part.quantity
                )
            }
            "put-back" => {
                let c = calls::put_back(&st.pool, id, count(&f.qty, "pieces")?, me).await?;
                format!(
                    "Put back {} × {}; {} on the shelf.",
                    c.delta,
                    c.part.label(),
                    c.part.quantity
                )
            }
            "hold" => {
                let h =
                    calls::hold_part(&st.pool, id, count(&f.qty, "pieces")?, &f.plan, me).await?;
                format!("Held {} for plan {}.", h.pieces(), h.plan)
            }
            "recount" => {
                let c = calls::recount(&st.pool, id, count(&f.counted, "counted")?, me).await?;
                format!("Recounted: {} (was {}).", c.part.quantity, c.before)
            }
            other => return Err(WebError::NotFound(format!("no action {other:?} on a part"))),
        };
        Ok(done(&page, &note))
    }
    .await;
    finish(&v, r)
}

async fn holds(v: Viewer, State(st): State<AppState>, Query(n): Query<Note>) -> Response {
    let r = async {
        let me = v.member()?;
        let all = me.organiser && n.all.is_some();
        let view = calls::holds(&st.pool, me, all).await?;
        Ok(html(pages::holds(v.who(), &view, all, n.done.as_deref())))
    }
    .await;
    finish(&v, r)
}

#[derive(Debug, Default, Deserialize)]
struct SettleForm {
    #[serde(default)]
    csrf: String,
    #[serde(default)]
    plan: String,
    /// Empty: every member (unit) of the plan.
    #[serde(default)]
    member: String,
}

async fn settle(
    v: Viewer,
    State(st): State<AppState>,
    Path(action): Path<String>,
    Form(f): Form<SettleForm>,
) -> Response {
    let r = async {
        let me = v.writer(Some(&f.csrf))?;
        let how = match action.as_str() {
            "release" => Settle::Release,
            "use" => Settle::Use,
            other => return Err(WebError::NotFound(format!("no action {other:?} on holds"))),
        };
        let member = Some(f.member.as_str()).filter(|m| !m.trim().is_empty());
        let c = calls::settle(&st.pool, how, &f.plan, member, me).await?;
        let verb = if how == Settle::Use {
            "Used"
        } else {
            "Released"
        };
        Ok(done(
            "/holds",
            &format!("{verb} {} pieces of plan {}.", c.pieces(), c.plan),
        ))
    }
    .await;
    finish(&v, r)
}

async fn design_page(
    v: Viewer,
    State(st): State<AppState>,
    Query(f): Query<DesignForm>,
) -> Response {
    let r = async {
        v.may_read(&st.options)?;
        if f.form.is_empty() {
            return Ok(html(pages::design(v.who(), &f, None, &[])));
        }
        let (goal, settings) = design::request(&f, st.options.design_time_limit)?;
        let parts = calls::snapshot(&st.pool).await?;
        let (result, parts) = tokio::task::spawn_blocking(move || {
            design::run(&parts, &goal, &settings).map(|r| (r, parts))
        })
        .await
        .map_err(|e| WebError::Internal(e.to_string()))??;
        Ok(html(pages::design(v.who(), &f, Some(&result), &parts)))
    }
    .await;
    finish(&v, r)
}

#[derive(Debug, Default, Deserialize)]
struct KitForm {
    #[serde(default)]
    csrf: String,
    #[serde(default)]
    plan: String,
    #[serde(default)]
    units: String,
    #[serde(default)]
    kit: String,
}

/// `3:1,7:2` → [(3, 1), (7, 2)].
pub fn parse_kit(text: &str) -> Result<Vec<(i64, i64)>, WebError> {
    text.split(',')
        .filter(|s| !s.trim().is_empty())
        .map(|item| {
            let (id, n) = item.split_once(':').ok_or_else(|| {
                WebError::BadInput(format!("kit item {item:?}: write PART:PIECES"))
            })?;
            Ok((count(id, "part")?, count(n, "pieces")?))
        })
        .collect()
}

async fn hold_kit(v: Viewer, State(st): State<AppState>, Form(f): Form<KitForm>) -> Response {
    let r = async {
        let me = v.writer(Some(&f.csrf))?;
        let units = usize::try_from(count(&f.units, "units")?)
            .map_err(|_| WebError::BadInput("units must be 1 or more".into()))?;
        let kit = parse_kit(&f.kit)?;
        let c = calls::hold_kit(&st.pool, &f.plan, units, &kit, me).await?;
        Ok(done(
            "/holds",
            &format!(
                "Held {} pieces for {} units of plan {}.",
                c.pieces(),
                units,
                c.plan
            ),
        ))
    }
    .await;
    finish(&v, r)
}

async fn plan_form(v: Viewer) -> Response {
    let r = async {
        v.member()?;
        Ok(html(pages::plan(v.who(), "", "", None)))
    }
    .await;
    finish(&v, r)
}

#[derive(Debug, Default, Deserialize)]
struct PlanForm {
    #[serde(default)]
    csrf: String,
    /// The plan file's text (TOML, as `onhand plan FILE` reads it).
    #[serde(default)]
    plan: String,
    /// Units to build, overriding the file's (as `--units`); empty: the file's.
    #[serde(default)]
    units: String,
    /// Present: hold the built units (as `--hold`); absent: only count them.
    #[serde(default)]
    hold: Option<String>,
}

/// Count (and with `hold`, hold) a pasted plan file's units. Both are behind a session and
/// its token: the count runs the integer program, which is too costly to leave open.
async fn plan_file(v: Viewer, State(st): State<AppState>, Form(f): Form<PlanForm>) -> Response {
    let r = async {
        let me = v.writer(Some(&f.csrf))?;
        let units = match f.units.trim() {
            "" => None,
            u => Some(
                u32::try_from(count(u, "units")?)
                    .map_err(|_| WebError::BadInput("units must be 1 or more".into()))?,
            ),
        };
        let hold = f.hold.is_some();
        let view = calls::plan(
            &st.pool,
            &f.plan,
            units,
            hold,
            st.options.design_time_limit,
            me,
        )
        .await?;
        match &view.held {
            Some(c) => {
                let mut units: Vec<u32> = c
                    .lines
                    .iter()
                    .filter_map(|l| crate::store::unit_of(&l.hold.member))
                    .collect();
                units.sort_unstable();
                units.dedup();
                let note = if units.is_empty() {
                    format!(
                        "Plan {} already holds its units: nothing changed.",
                        view.name
                    )
                } else {
                    format!(
                        "Held {} of plan {} ({} pieces).",
                        crate::store::units_text(&units),
                        view.name,
                        c.pieces()
                    )
                };
                Ok(done("/holds", &note))
            }
            None => Ok(html(pages::plan(v.who(), &f.plan, &f.units, Some(&view)))),
        }
    }
    .await;
    finish(&v, r)
}

async fn import_form(v: Viewer) -> Response {
    let r = async {
        let me = v.member()?;
        if !me.organiser {
            return Err(WebError::Forbidden(
                "only an organiser may import stock".into(),
            ));
        }
        Ok(html(pages::import(v.who(), "", None)))
    }
    .await;
    finish(&v, r)
}

#[derive(Debug, Default, Deserialize)]
struct ImportForm {
    #[serde(default)]
    csrf: String,
    #[serde(default)]
    csv: String,
    #[serde(default)]
    dry_run: Option<String>,
}

async fn import(v: Viewer, State(st): State<AppState>, Form(f): Form<ImportForm>) -> Response {
    let r = async {
        let me = v.writer(Some(&f.csrf))?;
        let report = calls::import(&st.pool, f.csv.clone(), f.dry_run.is_some(), me).await?;
        Ok(html(pages::import(v.who(), &f.csv, Some(&report))))
    }
    .await;
    finish(&v, r)
}

async fn members(v: Viewer, State(st): State<AppState>, Query(n): Query<Note>) -> Response {
    let r = async {
        let list = calls::members(&st.pool, v.member()?).await?;
        Ok(html(pages::members(v.who(), &list, n.done.as_deref())))
    }
    .await;
    finish(&v, r)
}

#[derive(Debug, Default, Deserialize)]
struct MemberForm {
    #[serde(default)]
    csrf: String,
    #[serde(default)]
    name: String,
    #[serde(default)]
    password: String,
    #[serde(default)]
    organiser: Option<String>,
}

async fn add_member(v: Viewer, State(st): State<AppState>, Form(f): Form<MemberForm>) -> Response {
    let r = async {
        let me = v.writer(Some(&f.csrf))?;
        let m =
            calls::add_member(&st.pool, &f.name, f.organiser.is_some(), &f.password, me).await?;
        Ok(done("/members", &format!("Added {}.", m.name)))
    }
    .await;
    finish(&v, r)
}

async fn remove_member(
    v: Viewer,
    State(st): State<AppState>,
    Form(f): Form<MemberForm>,
) -> Response {
    let r = async {
        let me = v.writer(Some(&f.csrf))?;
        let m = calls::remove_member(&st.pool, &f.name, me).await?;
        Ok(done("/members", &format!("Removed {}.", m.name)))
    }
    .await;
    finish(&v, r)
}

async fn log(v: Viewer, State(st): State<AppState>, Query(q): Query<LogQuery>) -> Response {
    let r = async {
        let me = v.member()?;
        let view = calls::log(&st.pool, q.filter()?, me).await?;
        Ok(html(pages::log(v.who(), &q, &view)))
    }
    .await;
    finish(&v, r)
}
