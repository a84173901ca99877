//! The JSON API beside the pages, under `/api`: the same calls and rights, JSON in and out.
//! Writes need the session cookie and its anti-forgery token in the `x-csrf-token` header
//! (`POST /api/login` answers with it). Errors are `{"error": …, "status": …}` with a 4xx
//! (503 + `Retry-After` when the database is busy).

use super::calls::LogQuery;
use super::calls::{self, Settle, StockQuery};
use super::design::{self, DesignForm};
use super::error::{ApiError, WebError};
use super::routes::{check_login, session_cookie};
use super::{AppState, Viewer, auth};
use axum::Json;
use axum::Router;
use axum::extract::{Path, Query, State};
use axum::http::header;
use axum::response::{IntoResponse, Response};
use axum::routing::{get, post};
use serde::Deserialize;
use serde_json::{Value, json};

type ApiResult = Result<Response, ApiError>;

fn ok(v: impl serde::Serialize) -> ApiResult {
    Ok(
        Json(serde_json::to_value(v).map_err(|e| WebError::Internal(e.to_string()))?)
            .into_response(),
    )
}

/// A JSON body, refused with a clear 400 (not axum's default) when it is not what we expect.
fn body<T: serde::de::DeserializeOwned>(bytes: &[u8]) -> Result<T, WebError> {
    serde_json::from_slice(bytes).map_err(|e| WebError::BadInput(format!("JSON body: {e}")))
}

pub(super) fn routes() -> Router<AppState> {
    Router::new()
        .route("/api/login", post(login))
        .route("/api/logout", post(logout))
        .route("/api/me", get(me))
        .route("/api/parts", get(parts))
        .route("/api/parts/{id}", get(part))
        .route("/api/parts/{id}/{action}", post(part_write))
        .route("/api/holds", get(holds))
        .route("/api/holds/{action}", post(settle))
        .route("/api/design", get(design_run))
        .route("/api/kits", post(hold_kit))
        .route("/api/plans", post(plan_file))
        .route("/api/import", post(import))
        .route("/api/log", get(log))
        .route("/api/members", get(members))
}

#[derive(Debug, Default, Deserialize)]
struct PlanQuery {
    /// Units to build, overriding the file's (as `--units`).
    #[serde(default)]
    units: Option<String>,
    /// `1`: hold the built units (as `--hold`).
    #[serde(default)]
    hold: Option<String>,
}

/// The body is the plan file itself (`curl --data-binary @kit.toml`): its count, and with
/// `?hold=1` its units held unit by unit, as the plan page does.
async fn plan_file(
    v: Viewer,
    State(st): State<AppState>,
    Query(q): Query<PlanQuery>,
    b: axum::body::Bytes,
) -> ApiResult {
    let me = v.writer(None)?;
    let text = std::str::from_utf8(&b)
        .map_err(|_| WebError::BadInput("the plan file is not UTF-8 text".into()))?;
    let hold = q.hold.as_deref().is_some_and(|h| h == "1");
    let units = q
        .units
        .as_deref()
        .map(|u| {
            u32::try_from(super::routes::count(u, "units")?)
                .map_err(|_| WebError::BadInput("units must be 1 or more".into()))
        })
        .transpose()?;
    ok(calls::plan(
        &st.pool,
        text,
        units,
        hold,
        st.options.design_time_limit,
        me,
    )
    .await?)
}

#[derive(Debug, Deserialize)]
struct Login {
    name: String,
    password: String,
}

async fn login(v: Viewer, State(st): State<AppState>, b: axum::body::Bytes) -> ApiResult {
    let l: Login = body(&b)?;
    match check_login(&st, &v, &l.name, &l.password).await? {
        Some((m, token, csrf)) => {
            let mut r = Json(json!({"member": m, "csrf": csrf})).into_response();
            r.headers_mut()
                .append(header::SET_COOKIE, session_cookie(&st, &token));
            Ok(r)
        }
        None => Err(WebError::Forbidden("wrong name or password".into()).into()),
    }
}

async fn logout(v: Viewer, State(st): State<AppState>) -> ApiResult {
    v.writer(None)?;
    if let Some(t) = &v.token {
        calls::logout(&st.pool, t).await?;
    }
    let mut r = Json(json!({"logged_out": true})).into_response();
    r.headers_mut().append(
        header::SET_COOKIE,
        auth::set_cookie(auth::SESSION_COOKIE, "", 0, st.options.secure_cookies),
    );
    Ok(r)
}

async fn me(v: Viewer) -> ApiResult {
    ok(json!({"member": v.member()?}))
}

async fn parts(v: Viewer, State(st): State<AppState>, Query(q): Query<StockQuery>) -> ApiResult {
    v.may_read(&st.options)?;
    ok(calls::search(&st.pool, &q).await?)
}

async fn part(v: Viewer, State(st): State<AppState>, Path(id): Path<i64>) -> ApiResult {
    v.may_read(&st.options)?;
    ok(calls::part(&st.pool, id).await?)
}

#[derive(Debug, Default, Deserialize)]
struct PartWrite {
    #[serde(default)]
    qty: Option<i64>,
    #[serde(default)]
    plan: String,
    #[serde(default)]
    counted: Option<i64>,
}

fn need(n: Option<i64>, what: &str) -> Result<i64, WebError> {
    n.ok_or_else(|| WebError::BadInput(format!("give {what} in the JSON body")))
}

async fn part_write(
    v: Viewer,
    State(st): State<AppState>,
    Path((id, action)): Path<(i64, String)>,
    b: axum::body::Bytes,
) -> ApiResult {
    let me = v.writer(None)?;
    let f: PartWrite = body(&b)?;
    match action.as_str() {
        "take" => ok(calls::take(&st.pool, id, need(f.qty, "\"qty\"")?, me).await?),
        "put-back" => ok(calls::put_back(&st.pool, id, need(f.qty, "\"qty\"")?, me).await?),
        "hold" => ok(calls::hold_part(&st.pool, id, need(f.qty, "\"qty\"")?, &f.plan, me).await?),
        "recount" => ok(calls::recount(&st.pool, id, need(f.counted, "\"counted\"")?, me).await?),
        other => Err(WebError::NotFound(format!("no action {other:?} on a part")).into()),
    }
}

#[derive(Debug, Default, Deserialize)]
struct All {
    #[serde(default)]
    all: Option<String>,
}

async fn holds(v: Viewer, State(st): State<AppState>, Query(a): Query<All>) -> ApiResult {
    let me = v.member()?;
    let all = me.organiser && a.all.is_some();
    ok(calls::holds(&st.pool, me, all).await?)
}

#[derive(Debug, Deserialize)]
struct SettleBody {
    plan: String,
    #[serde(default)]
    member: Option<String>,
}

async fn settle(
    v: Viewer,
    State(st): State<AppState>,
    Path(action): Path<String>,
    b: axum::body::Bytes,
) -> ApiResult {
    let me = v.writer(None)?;
    let how = match action.as_str() {
        "release" => Settle::Release,
        "use" => Settle::Use,
        other => return Err(WebError::NotFound(format!("no action {other:?} on holds")).into()),
    };
    let s: SettleBody = body(&b)?;
    ok(calls::settle(&st.pool, how, &s.plan, s.member.as_deref(), me).await?)
}

async fn design_run(
    v: Viewer,
    State(st): State<AppState>,
    Query(f): Query<DesignForm>,
) -> ApiResult {
    v.may_read(&st.options)?;
    let (goal, settings) = design::request(&f, st.options.design_time_limit)?;
    let parts = calls::snapshot(&st.pool).await?;
    let r = tokio::task::spawn_blocking(move || design::run(&parts, &goal, &settings))
        .await
        .map_err(|e| WebError::Internal(e.to_string()))??;
    ok(
        json!({"report": r.report, "kit": r.kit, "result": r.json, "waveform_svg": r.waveforms.first(), "waveforms_svg": r.waveforms, "reach_svg": r.reach}),
    )
}

#[derive(Debug, Deserialize)]
struct KitBody {
    plan: String,
    units: usize,
    /// (part row id, pieces per unit).
    kit: Vec<(i64, i64)>,
}

async fn hold_kit(v: Viewer, State(st): State<AppState>, b: axum::body::Bytes) -> ApiResult {
    let me = v.writer(None)?;
    let k: KitBody = body(&b)?;
    ok(calls::hold_kit(&st.pool, &k.plan, k.units, &k.kit, me).await?)
}

#[derive(Debug, Deserialize)]
struct ImportBody {
    csv: String,
    #[serde(default)]
    dry_run: bool,
}

async fn import(v: Viewer, State(st): State<AppState>, b: axum::body::Bytes) -> ApiResult {
    let me = v.writer(None)?;
    let i: ImportBody = body(&b)?;
    ok(calls::import(&st.pool, i.csv, i.dry_run, me).await?)
}

async fn log(v: Viewer, State(st): State<AppState>, Query(q): Query<LogQuery>) -> ApiResult {
    let me = v.member()?;
    let view = calls::log(&st.pool, q.filter()?, me).await?;
    ok(view)
}

async fn members(v: Viewer, State(st): State<AppState>) -> ApiResult {
    let list: Vec<Value> = calls::members(&st.pool, v.member()?)
        .await?
        .into_iter()
        .map(|m| json!(m))
        .collect();
    ok(list)
}
