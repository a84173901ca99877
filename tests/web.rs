//! The web page in process: every page and API call, the rights matrix (anonymous / member /
//! organiser), anti-forgery refusals, the login throttle, escaping of store text, concurrent
//! takes through HTTP, a busy database, and the `member` and `serve` commands.

use crate::util::{Bench, onhand, repo_path};
use axum::Router;
use axum::body::Body;
use axum::http::{Request, StatusCode, header};
use onhand::store::{PartText, Store, read_csv};
use onhand::web::{AppState, Options, Pool, auth, router};
use std::time::Duration;
use tower::ServiceExt as _;

/// A store with two members and an organiser, a 4k7 row and a 100 nF row, and the app.
pub struct Site {
    pub dir: tempfile::TempDir,
    pub app: Router,
    pub r4k7: i64,
    pub c100n: i64,
}

/// A logged-in session: the cookie header value and the anti-forgery token.
#[derive(Clone, Debug)]
pub struct Sess {
    pub cookie: String,
    pub csrf: String,
}

pub struct Answer {
    pub status: StatusCode,
    pub headers: axum::http::HeaderMap,
    pub body: String,
}

impl Answer {
    pub fn json(&self) -> serde_json::Value {
        serde_json::from_str(&self.body).unwrap_or_else(|e| panic!("not JSON ({e}): {}", self.body))
    }
    pub fn location(&self) -> String {
        self.headers
            .get(header::LOCATION)
            .and_then(|v| v.to_str().ok())
            .unwrap_or("")
            .to_string()
    }
}

pub const PASSWORD: &str = "a good long password";

/// Seed a store at `path`: members alice, bob (members) and olga (organiser), two parts.
pub fn seed(path: &std::path::Path) -> (i64, i64) {
    let mut s = Store::open(path).expect("open");
    let phc = auth::hash_password(PASSWORD).expect("hash");
    for (name, org) in [("alice", false), ("bob", false), ("olga", true)] {
        s.add_member(name, org).expect("member");
        s.set_member_password(name, &phc).expect("password");
    }
    let add = |s: &mut Store, value: &str, bin: &str, qty: i64, note: &str| {
        let spec = PartText {
            value: value.into(),
            bin: Some(bin.into()),
            low: Some("5".into()),
            note: Some(note.into()),
            ..PartText::default()
        }
        .resolve()
        .expect("spec");
        s.add(&spec, qty, "olga", "stock").expect("add").part.id
    };
    let r = add(&mut s, "4k7", "A3", 50, "");
    let c = add(&mut s, "100n", "C1", 20, "");
    (r, c)
}

impl Site {
    pub fn new(options: Options) -> Self {
        Self::with_wait(options, Duration::from_millis(2000))
    }

    pub fn with_wait(options: Options, wait: Duration) -> Self {
        let dir = tempfile::tempdir().expect("tmp");
        let db = dir.path().join("stock.db");
        let (r4k7, c100n) = seed(&db);
        let pool = Pool::open(db, 4, wait).expect("pool");
        let state = AppState::new(pool, options);
        let app = router(state);
        Site {
            dir,
            app,
            r4k7,
            c100n,
        }
    }

    pub fn db(&self) -> std::path::PathBuf {
        self.dir.path().join("stock.db")
    }

    pub fn store(&self) -> Store {
        Store::open(&self.db()).expect("open")
    }

    pub async fn send(&self, req: Request<Body>) -> Answer {
        let r = self.app.clone().oneshot(req).await.expect("infallible");
        let status = r.status();
        let headers = r.headers().clone();
        let bytes = axum::body::to_bytes(r.into_body(), 10 << 20)
            .await
            .expect("body");
        Answer {
            status,
            headers,
            body: String::from_utf8_lossy(&bytes).into_owned(),
        }
    }

    pub async fn get(&self, path: &str, s: Option<&Sess>) -> Answer {
        let mut b = Request::get(path);
        if let Some(s) = s {
            b = b.header(header::COOKIE, &s.cookie);
        }
        self.send(b.body(Body::empty()).expect("req")).await
    }

    /// A form post; `csrf` is added as the `csrf` field unless `None`.
    pub async fn form(
        &self,
        path: &str,
        s: Option<&Sess>,
        fields: &[(&str, &str)],
        csrf: Option<&str>,
    ) -> Answer {
        let mut pairs: Vec<String> = fields
            .iter()
            .map(|(k, v)| format!("{k}={}", enc(v)))
            .collect();
        if let Some(c) = csrf {
            pairs.push(format!("csrf={c}"));
        }
        let mut b =
            Request::post(path).header(header::CONTENT_TYPE, "application/x-www-form-urlencoded");
        if let Some(s) = s {
            b = b.header(header::COOKIE, &s.cookie);
        }
        self.send(b.body(Body::from(pairs.join("&"))).expect("req"))
            .await
    }

    /// A JSON post with the session's token in the header (when `csrf`).
    pub async fn api(
        &self,
        path: &str,
        s: Option<&Sess>,
        body: serde_json::Value,
        csrf: bool,
    ) -> Answer {
        let mut b = Request::post(path).header(header::CONTENT_TYPE, "application/json");
        if let Some(s) = s {
            b = b.header(header::COOKIE, &s.cookie);
            if csrf {
                b = b.header("x-csrf-token", &s.csrf);
            }
        }
        self.send(b.body(Body::from(body.to_string())).expect("req"))
            .await
    }

    pub async fn login(&self, name: &str) -> Sess {
        let a = self
            .api(
                "/api/login",
                None,
                serde_json::json!({"name": name, "password": PASSWORD}),
                false,
            )
            .await;
        assert_eq!(a.status, StatusCode::OK, "{}", a.body);
        let set = a
            .headers
            .get(header::SET_COOKIE)
            .and_then(|v| v.to_str().ok())
            .expect("cookie");
        let cookie = set.split(';').next().expect("pair").to_string();
        let csrf = a.json()["csrf"].as_str().expect("csrf").to_string();
        Sess { cookie, csrf }
    }

    pub fn quantity(&self, id: i64) -> (i64, i64) {
        let p = self
            .store()
            .parts(&onhand::store::PartFilter::default())
            .expect("parts")
            .into_iter()
            .find(|p| p.id == id)
            .expect("part");
        (p.quantity, p.held)
    }
}

pub fn enc(s: &str) -> String {
    s.bytes()
        .map(|b| {
            if b.is_ascii_alphanumeric() {
                (b as char).to_string()
            } else {
                format!("%{b:02X}")
            }
        })
        .collect()
}

fn open() -> Options {
    Options {
        open_read: true,
        ..Options::default()
    }
}

#[tokio::test]
async fn reading_is_closed_by_default_and_open_by_option() {
    let closed = Site::new(Options::default());
    let a = closed.get("/", None).await;
    assert_eq!(
        (a.status, a.location().as_str()),
        (StatusCode::SEE_OTHER, "/login")
    );
    assert_eq!(
        closed.get("/api/parts", None).await.status,
        StatusCode::UNAUTHORIZED
    );
    assert_eq!(closed.get("/login", None).await.status, StatusCode::OK);
    let s = closed.login("alice").await;
    assert_eq!(closed.get("/", Some(&s)).await.status, StatusCode::OK);

    let site = Site::new(open());
    let a = site.get("/?q=4k7", None).await;
    assert_eq!(a.status, StatusCode::OK);
    assert!(a.body.contains("4.7 kΩ"), "{}", a.body);
    assert!(a.body.contains("Log in"));
    // Reading open does not open writing.
    let w = site
        .form(
            &format!("/part/{}/take", site.r4k7),
            None,
            &[("qty", "1")],
            Some("x"),
        )
        .await;
    assert_eq!(w.location(), "/login");
    assert_eq!(site.quantity(site.r4k7), (50, 0));
}

/// One row of the pages' rights matrix: method, path, form fields, expected statuses.
type PageCase = (
    &'static str,
    String,
    Vec<(&'static str, &'static str)>,
    [StatusCode; 3],
);

/// (method, path, body) → expected status for anonymous, member, organiser. Writes carry the
/// session's token; the part row is seeded with 50 pieces, so every take succeeds.
#[tokio::test]
async fn rights_matrix_anonymous_member_organiser() {
    let site = Site::new(Options::default());
    let member = site.login("alice").await;
    let org = site.login("olga").await;
    let r = site.r4k7;
    let see = StatusCode::SEE_OTHER;
    let ok = StatusCode::OK;
    let no = StatusCode::FORBIDDEN;
    let anon_page = StatusCode::SEE_OTHER; // to the login page
    let pages: Vec<PageCase> = vec![
        ("GET", "/".into(), vec![], [anon_page, ok, ok]),
        ("GET", format!("/part/{r}"), vec![], [anon_page, ok, ok]),
        ("GET", "/holds".into(), vec![], [anon_page, ok, ok]),
        ("GET", "/design".into(), vec![], [anon_page, ok, ok]),
        ("GET", "/import".into(), vec![], [anon_page, no, ok]),
        ("GET", "/members".into(), vec![], [anon_page, no, ok]),
        ("GET", "/log".into(), vec![], [anon_page, no, ok]),
        (
            "POST",
            format!("/part/{r}/take"),
            vec![("qty", "1")],
            [anon_page, see, see],
        ),
        (
            "POST",
            format!("/part/{r}/put-back"),
            vec![("qty", "1")],
            [anon_page, see, see],
        ),
        (
            "POST",
            format!("/part/{r}/hold"),
            vec![("qty", "1"), ("plan", "p")],
            [anon_page, see, see],
        ),
        (
            "POST",
            format!("/part/{r}/recount"),
            vec![("counted", "40")],
            [anon_page, no, see],
        ),
        (
            "POST",
            "/import".into(),
            vec![
                ("csv", "kind,value,quantity\nresistor,1k,1\n"),
                ("dry_run", "1"),
            ],
            [anon_page, no, ok],
        ),
        (
            "POST",
            "/members".into(),
            vec![("name", "zed"), ("password", "long enough pw")],
            [anon_page, no, see],
        ),
    ];
    for (method, path, fields, want) in &pages {
        for (i, s) in [None, Some(&member), Some(&org)].into_iter().enumerate() {
            let a = if *method == "GET" {
                site.get(path, s).await
            } else {
                site.form(path, s, fields, s.map(|s| s.csrf.as_str())).await
            };
            assert_eq!(a.status, want[i], "{method} {path} as #{i}: {}", a.body);
        }
    }
    let api: Vec<(&str, String, serde_json::Value, [StatusCode; 3])> = vec![
        (
            "GET",
            "/api/parts?q=4k7".into(),
            serde_json::Value::Null,
            [StatusCode::UNAUTHORIZED, ok, ok],
        ),
        (
            "GET",
            format!("/api/parts/{r}"),
            serde_json::Value::Null,
            [StatusCode::UNAUTHORIZED, ok, ok],
        ),
        (
            "GET",
            "/api/holds".into(),
            serde_json::Value::Null,
            [StatusCode::UNAUTHORIZED, ok, ok],
        ),
        (
            "GET",
            "/api/log".into(),
            serde_json::Value::Null,
            [StatusCode::UNAUTHORIZED, no, ok],
        ),
        (
            "GET",
            "/api/members".into(),
            serde_json::Value::Null,
            [StatusCode::UNAUTHORIZED, no, ok],
        ),
        (
            "GET",
            "/api/me".into(),
            serde_json::Value::Null,
            [StatusCode::UNAUTHORIZED, ok, ok],
        ),
        (
            "POST",
            format!("/api/parts/{r}/take"),
            serde_json::json!({"qty": 1}),
            [StatusCode::UNAUTHORIZED, ok, ok],
        ),
        (
            "POST",
            format!("/api/parts/{r}/recount"),
            serde_json::json!({"counted": 30}),
            [StatusCode::UNAUTHORIZED, no, ok],
        ),
        (
            "POST",
            "/api/import".into(),
            serde_json::json!({"csv": "kind,value,quantity\nresistor,1k,1\n", "dry_run": true}),
            [StatusCode::UNAUTHORIZED, no, ok],
        ),
    ];
    for (method, path, body, want) in &api {
        for (i, s) in [None, Some(&member), Some(&org)].into_iter().enumerate() {
            let a = if *method == "GET" {
                site.get(path, s).await
            } else {
                site.api(path, s, body.clone(), true).await
            };
            assert_eq!(a.status, want[i], "{method} {path} as #{i}: {}", a.body);
        }
    }
}

#[tokio::test]
async fn forms_and_api_calls_without_the_token_are_refused_and_change_nothing() {
    let site = Site::new(Options::default());
    let s = site.login("alice").await;
    let path = format!("/part/{}/take", site.r4k7);
    for csrf in [None, Some(""), Some("0000")] {
        let a = site.form(&path, Some(&s), &[("qty", "3")], csrf).await;
        assert_eq!(a.status, StatusCode::FORBIDDEN, "{}", a.body);
        assert!(a.body.contains("security token"), "{}", a.body);
    }
    // Another session's token is not this session's.
    let other = site.login("bob").await;
    let a = site
        .form(&path, Some(&s), &[("qty", "3")], Some(&other.csrf))
        .await;
    assert_eq!(a.status, StatusCode::FORBIDDEN);
    let a = site
        .api(
            &format!("/api/parts/{}/take", site.r4k7),
            Some(&s),
            serde_json::json!({"qty": 3}),
            false,
        )
        .await;
    assert_eq!(a.status, StatusCode::FORBIDDEN);
    assert_eq!(site.quantity(site.r4k7), (50, 0));
    // Logging out needs the token too, then the session is gone.
    assert_eq!(
        site.form("/logout", Some(&s), &[], None).await.status,
        StatusCode::FORBIDDEN
    );
    let out = site.form("/logout", Some(&s), &[], Some(&s.csrf)).await;
    assert_eq!(out.location(), "/login");
    assert_eq!(site.get("/holds", Some(&s)).await.location(), "/login");
}

#[tokio::test]
async fn login_page_sets_strict_cookies_and_wants_its_token() {
    let site = Site::new(Options {
        secure_cookies: true,
        ..Options::default()
    });
    let form = site.get("/login", None).await;
    let pre = form
        .headers
        .get(header::SET_COOKIE)
        .and_then(|v| v.to_str().ok())
        .expect("pre");
    let pair = pre.split(';').next().expect("pair").to_string();
    let token = pair.split_once('=').expect("kv").1.to_string();
    assert!(form.body.contains(&token));
    let fields = [("name", "alice"), ("password", PASSWORD)];
    // Without the pre-login cookie the token means nothing.
    let bare = site.form("/login", None, &fields, Some(&token)).await;
    assert_eq!(bare.status, StatusCode::FORBIDDEN);
    let pre_sess = Sess {
        cookie: pair,
        csrf: token.clone(),
    };
    let wrong = site
        .form(
            "/login",
            Some(&pre_sess),
            &[("name", "alice"), ("password", "nope nope nope")],
            Some(&token),
        )
        .await;
    assert_eq!(wrong.status, StatusCode::UNAUTHORIZED);
    assert!(wrong.body.contains("Wrong name or password"));
    let good = site
        .form("/login", Some(&pre_sess), &fields, Some(&token))
        .await;
    assert_eq!(good.location(), "/");
    let cookies: Vec<&str> = good
        .headers
        .get_all(header::SET_COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .collect();
    let session = cookies
        .iter()
        .find(|c| c.starts_with(auth::SESSION_COOKIE))
        .expect("session cookie");
    for flag in ["HttpOnly", "SameSite=Strict", "Secure", "Path=/"] {
        assert!(session.contains(flag), "{session}");
    }
    // The store keeps only the token's hash.
    let token = session
        .split(';')
        .next()
        .and_then(|p| p.split_once('='))
        .expect("kv")
        .1;
    let store = site.store();
    assert!(store.session(token).expect("q").is_none());
    assert!(
        store
            .session(&auth::token_hash(token))
            .expect("q")
            .is_some()
    );
}

#[tokio::test]
async fn failed_logins_are_throttled() {
    let site = Site::new(Options::default());
    for _ in 0..5 {
        let a = site
            .api(
                "/api/login",
                None,
                serde_json::json!({"name": "alice", "password": "wrong wrong"}),
                false,
            )
            .await;
        assert_eq!(a.status, StatusCode::FORBIDDEN);
    }
    let a = site
        .api(
            "/api/login",
            None,
            serde_json::json!({"name": "alice", "password": PASSWORD}),
            false,
        )
        .await;
    assert_eq!(a.status, StatusCode::TOO_MANY_REQUESTS, "{}", a.body);
    assert!(a.headers.contains_key(header::RETRY_AFTER));
    // Another name is not held back by alice's failures.
    let b = site
        .api(
            "/api/login",
            None,
            serde_json::json!({"name": "bob", "password": PASSWORD}),
            false,
        )
        .await;
    assert_eq!(b.status, StatusCode::OK);
}

#[tokio::test]
async fn take_put_back_and_hold_through_pages_write_the_member_in_the_ledger() {
    let site = Site::new(Options::default());
    let s = site.login("alice").await;
    let base = format!("/part/{}", site.r4k7);
    let a = site
        .form(
            &format!("{base}/take"),
            Some(&s),
            &[("qty", "3")],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(a.status, StatusCode::SEE_OTHER);
    assert!(a.location().starts_with(&base));
    let page = site.get(&a.location(), Some(&s)).await;
    assert!(page.body.contains("Took 3"), "{}", page.body);
    assert!(page.body.contains(r#"id="shelf">47<"#), "{}", page.body);
    site.form(
        &format!("{base}/put-back"),
        Some(&s),
        &[("qty", "1")],
        Some(&s.csrf),
    )
    .await;
    site.form(
        &format!("{base}/hold"),
        Some(&s),
        &[("qty", "2")],
        Some(&s.csrf),
    )
    .await;
    assert_eq!(site.quantity(site.r4k7), (48, 2));
    let log = site
        .store()
        .log(&onhand::store::LogFilter::default())
        .expect("log");
    let mine: Vec<(&str, &str, i64)> = log
        .iter()
        .rev()
        .map(|l| &l.entry)
        .filter(|e| e.who == "alice")
        .map(|e| (e.why.as_str(), e.who.as_str(), e.delta + e.held_delta))
        .collect();
    assert_eq!(
        mine,
        vec![
            ("web: hold", "alice", 2),
            ("web: put back", "alice", 1),
            ("web: take", "alice", -3)
        ]
    );
    // A second member sees the hold and who made it; the stock page shows held and free.
    let b = site.login("bob").await;
    let page = site.get(&base, Some(&b)).await;
    assert!(
        page.body.contains(r#"<td class="who">alice</td>"#),
        "{}",
        page.body
    );
    let list = site.get("/?q=4k7", Some(&b)).await;
    assert!(
        list.body.contains(r#"<td class="n held">2</td>"#),
        "{}",
        list.body
    );
    assert!(
        list.body.contains(r#"<td class="n free">46"#),
        "{}",
        list.body
    );
}

#[tokio::test]
async fn holds_are_settled_by_their_maker_or_an_organiser() {
    let site = Site::new(Options::default());
    let alice = site.login("alice").await;
    let bob = site.login("bob").await;
    let olga = site.login("olga").await;
    site.form(
        &format!("/part/{}/hold", site.r4k7),
        Some(&alice),
        &[("qty", "4"), ("plan", "clock")],
        Some(&alice.csrf),
    )
    .await;
    let mine = site.get("/holds", Some(&alice)).await;
    assert!(mine.body.contains("clock"), "{}", mine.body);
    assert!(!site.get("/holds", Some(&bob)).await.body.contains("clock"));
    let a = site
        .form(
            "/holds/release",
            Some(&bob),
            &[("plan", "clock")],
            Some(&bob.csrf),
        )
        .await;
    assert_eq!(a.status, StatusCode::FORBIDDEN, "{}", a.body);
    assert_eq!(site.quantity(site.r4k7), (50, 4));
    assert!(
        site.get("/holds?all=1", Some(&olga))
            .await
            .body
            .contains("clock")
    );
    let a = site
        .form(
            "/holds/release",
            Some(&olga),
            &[("plan", "clock")],
            Some(&olga.csrf),
        )
        .await;
    assert_eq!(
        a.location(),
        "/holds?done=Released%204%20pieces%20of%20plan%20clock."
    );
    assert_eq!(site.quantity(site.r4k7), (50, 0));
    // Nothing left to release: a clear 409, nothing changed.
    let again = site
        .form(
            "/holds/release",
            Some(&olga),
            &[("plan", "clock")],
            Some(&olga.csrf),
        )
        .await;
    assert_eq!(again.status, StatusCode::CONFLICT, "{}", again.body);
    assert!(again.body.contains("holds nothing"));
}

#[tokio::test]
async fn a_kit_is_held_per_unit_used_unit_by_unit_and_released() {
    let site = Site::new(Options::default());
    let s = site.login("alice").await;
    let kit = format!("{}:2,{}:1", site.r4k7, site.c100n);
    let a = site
        .form(
            "/design/hold",
            Some(&s),
            &[("plan", "class"), ("units", "3"), ("kit", &kit)],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(a.status, StatusCode::SEE_OTHER, "{}", a.body);
    assert_eq!(site.quantity(site.r4k7), (50, 6));
    assert_eq!(site.quantity(site.c100n), (20, 3));
    let page = site.get("/holds", Some(&s)).await;
    for u in ["unit 1", "unit 2", "unit 3"] {
        assert!(page.body.contains(u), "{}", page.body);
    }
    site.form(
        "/holds/use",
        Some(&s),
        &[("plan", "class"), ("member", "unit 1")],
        Some(&s.csrf),
    )
    .await;
    assert_eq!(site.quantity(site.r4k7), (48, 4));
    assert_eq!(site.quantity(site.c100n), (19, 2));
    site.form(
        "/holds/release",
        Some(&s),
        &[("plan", "class"), ("member", "unit 3")],
        Some(&s.csrf),
    )
    .await;
    assert_eq!(site.quantity(site.r4k7), (48, 2));
    // More units than the stock covers: all or nothing.
    let big = site
        .form(
            "/design/hold",
            Some(&s),
            &[("plan", "big"), ("units", "30"), ("kit", &kit)],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(big.status, StatusCode::CONFLICT, "{}", big.body);
    assert_eq!(site.quantity(site.r4k7), (48, 2));
    let bad = site
        .form(
            "/design/hold",
            Some(&s),
            &[("plan", "x"), ("units", "1"), ("kit", "zz")],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(bad.status, StatusCode::BAD_REQUEST);
}

#[tokio::test]
async fn bad_input_gets_a_clear_message_and_a_4xx_with_nothing_changed() {
    let site = Site::new(Options::default());
    let s = site.login("alice").await;
    let base = format!("/part/{}", site.r4k7);
    let cases: [(&str, StatusCode, &str); 4] = [
        ("abc", StatusCode::BAD_REQUEST, "not a whole number"),
        ("0", StatusCode::BAD_REQUEST, "whole number of pieces"),
        ("-2", StatusCode::BAD_REQUEST, "whole number of pieces"),
        ("51", StatusCode::CONFLICT, "cannot take 51"),
    ];
    for (qty, status, text) in cases {
        let a = site
            .form(
                &format!("{base}/take"),
                Some(&s),
                &[("qty", qty)],
                Some(&s.csrf),
            )
            .await;
        assert_eq!(a.status, status, "{qty}: {}", a.body);
        assert!(a.body.contains(text), "{qty}: {}", a.body);
        assert!(a.body.contains("Nothing was changed"));
    }
    let api = site
        .api(
            &format!("/api/parts/{}/take", site.r4k7),
            Some(&s),
            serde_json::json!({"qty": "three"}),
            true,
        )
        .await;
    assert_eq!(api.status, StatusCode::BAD_REQUEST);
    assert!(
        api.json()["error"]
            .as_str()
            .expect("error")
            .contains("JSON body")
    );
    let held = site
        .api(
            &format!("/api/parts/{}/hold", site.r4k7),
            Some(&s),
            serde_json::json!({"qty": 99}),
            true,
        )
        .await;
    assert_eq!(held.status, StatusCode::CONFLICT);
    assert_eq!(
        site.get("/part/9999", Some(&s)).await.status,
        StatusCode::NOT_FOUND
    );
    assert_eq!(
        site.get("/api/parts/9999", Some(&s)).await.status,
        StatusCode::NOT_FOUND
    );
    assert_eq!(
        site.get("/?kind=blob", Some(&s)).await.status,
        StatusCode::BAD_REQUEST
    );
    assert_eq!(
        site.get("/design?form=astable", Some(&s)).await.status,
        StatusCode::BAD_REQUEST
    );
    assert_eq!(site.quantity(site.r4k7), (50, 0));
}

#[tokio::test]
async fn store_text_renders_inert() {
    let site = Site::new(Options::default());
    // Control characters are refused on input now (tests/safety.rs); markup and quotes remain.
    let evil = "<script>alert('x')</script> \"quoted\" 'single' bell";
    {
        let mut store = site.store();
        let spec = PartText {
            value: "1k".into(),
            bin: Some("<b>B9</b>".into()),
            note: Some(evil.into()),
            ..PartText::default()
        }
        .resolve()
        .expect("spec");
        store
            .add(&spec, 5, "<img src=x onerror=alert(1)>", "stock")
            .expect("add");
    }
    let s = site.login("olga").await;
    for (path, escaped) in [
        ("/?q=1k", "&lt;b&gt;B9&lt;/b&gt;"),
        ("/?q=script", "&lt;b&gt;B9&lt;/b&gt;"),
        ("/log", "&lt;img src=x onerror=alert(1)&gt;"),
    ] {
        let page = site.get(path, Some(&s)).await;
        assert_eq!(page.status, StatusCode::OK, "{path}");
        for raw in ["<script>alert", "<b>B9", "<img src=x", "\u{7}"] {
            assert!(
                !page.body.contains(raw),
                "{path} has {raw:?} raw: {}",
                page.body
            );
        }
        assert!(page.body.contains(escaped), "{path}: {}", page.body);
    }
    let page = site.get("/?q=1k", Some(&s)).await;
    assert!(
        page.body
            .contains("&lt;script&gt;alert('x')&lt;/script&gt; &quot;quoted&quot;"),
        "{}",
        page.body
    );
    assert!(page.body.contains(" bell"));
    // A plan name with markup is escaped on the holds page; one with control characters is refused.
    let id = site
        .store()
        .parts(&onhand::store::PartFilter::default())
        .expect("p")
        .iter()
        .find(|p| p.note == evil)
        .expect("row")
        .id;
    site.form(
        &format!("/part/{id}/hold"),
        Some(&s),
        &[("qty", "1"), ("plan", "<i>p</i>")],
        Some(&s.csrf),
    )
    .await;
    let holds = site.get("/holds", Some(&s)).await;
    assert!(
        holds.body.contains("&lt;i&gt;p&lt;/i&gt;") && !holds.body.contains("<i>p"),
        "{}",
        holds.body
    );
    let bad = site
        .form(
            &format!("/part/{id}/hold"),
            Some(&s),
            &[("qty", "1"), ("plan", "a\u{1}b")],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY, "{}", bad.body);
    // Every answer forbids scripts outright.
    let csp = holds
        .headers
        .get(header::CONTENT_SECURITY_POLICY)
        .and_then(|v| v.to_str().ok())
        .expect("csp");
    assert!(csp.contains("default-src 'none'"), "{csp}");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 4)]
async fn concurrent_takes_through_http_never_lose_an_update_or_go_negative() {
    let site = Site::new(Options::default());
    let sessions = [
        site.login("alice").await,
        site.login("bob").await,
        site.login("olga").await,
    ];
    // 12 clients × 6 takes of one piece against 50 pieces: exactly 50 succeed.
    let mut tasks = Vec::new();
    for c in 0..12 {
        let app = site.app.clone();
        let s = sessions[c % 3].clone();
        let path = format!("/api/parts/{}/take", site.r4k7);
        tasks.push(tokio::spawn(async move {
            let mut ok = 0;
            let mut refused = 0;
            for _ in 0..6 {
                let req = Request::post(&path)
                    .header(header::CONTENT_TYPE, "application/json")
                    .header(header::COOKIE, &s.cookie)
                    .header("x-csrf-token", &s.csrf)
                    .body(Body::from(r#"{"qty":1}"#))
                    .expect("req");
                let r = app.clone().oneshot(req).await.expect("infallible");
                match r.status() {
                    StatusCode::OK => ok += 1,
                    StatusCode::CONFLICT => refused += 1,
                    other => panic!("unexpected {other}"),
                }
            }
            (ok, refused)
        }));
    }
    let mut ok = 0;
    let mut refused = 0;
    for t in tasks {
        let (a, b) = t.await.expect("task");
        ok += a;
        refused += b;
    }
    assert_eq!((ok, refused), (50, 22));
    assert_eq!(site.quantity(site.r4k7), (0, 0));
    let store = site.store();
    let sum: i64 = store
        .ledger(Some(site.r4k7))
        .expect("ledger")
        .iter()
        .map(|e| e.delta)
        .sum();
    assert_eq!(sum, 0, "the ledger re-derives the count");
    assert_eq!(store.integrity_check().expect("check"), "ok");
}

#[tokio::test]
async fn a_busy_database_answers_retry_not_500() {
    let site = Site::with_wait(Options::default(), Duration::from_millis(100));
    let s = site.login("alice").await;
    let blocker = rusqlite::Connection::open(site.db()).expect("open");
    blocker
        .execute_batch("BEGIN IMMEDIATE; UPDATE part SET note = 'x' WHERE id = 1;")
        .expect("lock");
    let path = format!("/api/parts/{}/take", site.r4k7);
    let a = site
        .api(&path, Some(&s), serde_json::json!({"qty": 1}), true)
        .await;
    assert_eq!(a.status, StatusCode::SERVICE_UNAVAILABLE, "{}", a.body);
    assert_eq!(
        a.headers
            .get(header::RETRY_AFTER)
            .and_then(|v| v.to_str().ok()),
        Some("1")
    );
    let page = site
        .form(
            &format!("/part/{}/take", site.r4k7),
            Some(&s),
            &[("qty", "1")],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(page.status, StatusCode::SERVICE_UNAVAILABLE);
    assert!(page.body.contains("busy"), "{}", page.body);
    blocker.execute_batch("ROLLBACK").expect("unlock");
    assert_eq!(site.quantity(site.r4k7), (50, 0));
    let again = site
        .api(&path, Some(&s), serde_json::json!({"qty": 1}), true)
        .await;
    assert_eq!(again.status, StatusCode::OK);
    assert_eq!(site.quantity(site.r4k7), (49, 0));
}

#[tokio::test]
async fn search_reads_values_as_written_on_parts() {
    let site = Site::new(Options::default());
    let s = site.login("alice").await;
    // Sources: IEC 60062 (RKM code 4k7, capacitor code 104, colour bands yellow-violet-red).
    for (q, want, not) in [
        ("4k7", "4.7 kΩ", "100 nF"),
        ("yellow%20violet%20red%20gold", "4.7 kΩ", "100 nF"),
        ("104", "100 nF", "4.7 kΩ"),
        ("100n", "100 nF", "4.7 kΩ"),
    ] {
        let a = site.get(&format!("/?q={q}"), Some(&s)).await;
        let table = a.body.split("id=\"parts\"").nth(1).unwrap_or("");
        assert!(
            table.contains(want) && !table.contains(not),
            "{q}: {}",
            a.body
        );
    }
    let j = site.get("/api/parts?q=4k7&bin=A3", Some(&s)).await.json();
    assert_eq!(j["parts"].as_array().map(Vec::len), Some(1));
    assert_eq!(j["parts"][0]["quantity"], 50);
    let none = site.get("/api/parts?q=4k7&bin=Z9", Some(&s)).await.json();
    assert_eq!(none["parts"].as_array().map(Vec::len), Some(0));
    let low = site.get("/?low=1", Some(&s)).await;
    assert!(
        low.body.contains("No part in stock matches"),
        "{}",
        low.body
    );
}

#[tokio::test]
async fn design_page_searches_the_live_stock_draws_the_waveform_and_holds_the_kit() {
    let site = Site::new(Options::default());
    {
        let csv =
            std::fs::read_to_string(repo_path("sample-stock/makerspace-cabinet.csv")).expect("csv");
        let mut store = site.store();
        store
            .import(&read_csv(&csv).expect("read"), "cabinet", "olga", false)
            .expect("import");
    }
    let s = site.login("alice").await;
    // ±3 %: the cabinet's 1 µF parts are X7R, whose DC-bias band alone is wider than ±1 %.
    let a = site
        .get("/design?form=pulse&width=250ms&tol=3%25", Some(&s))
        .await;
    assert_eq!(a.status, StatusCode::OK, "{}", a.body);
    assert!(a.body.contains("<svg"), "no waveform");
    assert!(a.body.contains(r#"id="report""#));
    let kit = a
        .body
        .split(r#"name="kit" value=""#)
        .nth(1)
        .and_then(|t| t.split('"').next())
        .expect("kit")
        .to_string();
    let h = site
        .form(
            "/design/hold",
            Some(&s),
            &[("plan", "timer"), ("units", "1"), ("kit", &kit)],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(h.status, StatusCode::SEE_OTHER, "{}", h.body);
    let holds = site.get("/api/holds", Some(&s)).await.json();
    assert!(!holds["holds"].as_array().expect("holds").is_empty());
    let j = site
        .get(
            "/api/design?form=astable&freq=1kHz&duty=60..70%25",
            Some(&s),
        )
        .await;
    assert_eq!(j.status, StatusCode::OK, "{}", j.body);
    assert!(j.json()["report"].as_str().is_some());
}

/// A site whose stock is the sample cabinet, and alice's session.
async fn cabinet_site() -> (Site, Sess) {
    let site = Site::new(Options::default());
    {
        let csv =
            std::fs::read_to_string(repo_path("sample-stock/makerspace-cabinet.csv")).expect("csv");
        let mut store = site.store();
        store
            .import(&read_csv(&csv).expect("read"), "cabinet", "olga", false)
            .expect("import");
    }
    let s = site.login("alice").await;
    (site, s)
}

#[tokio::test]
async fn design_page_draws_the_reach_beside_the_waveform_and_offers_square_pair_and_dual() {
    let (site, s) = cabinet_site().await;
    let a = site
        .get("/design?form=pulse&width=250ms&tol=3%25", Some(&s))
        .await;
    assert_eq!(a.status, StatusCode::OK, "{}", a.body);
    assert!(a.body.contains(r#"id="waveform""#), "no waveform");
    assert!(a.body.contains(r#"id="reach""#), "no reach picture");
    assert!(a.body.contains("Reach of the free stock"), "{}", a.body);
    // The square form, as `onhand find square` offers it.
    let sq = site
        .get("/api/design?form=square&freq=100Hz&tol=5%25", Some(&s))
        .await;
    assert_eq!(sq.status, StatusCode::OK, "{}", sq.body);
    let sq = sq.json();
    assert_eq!(sq["reach_svg"].as_array().map(Vec::len), Some(1), "{sq}");
    // The pair: an astable triggering a one-shot, two stages, two waveforms when found; the
    // steered form has no reach question, the astable and the pulse each have one.
    let pair = site
        .get("/design?form=pair&freq=10Hz&width=20ms&tol=5%25", Some(&s))
        .await;
    assert_eq!(pair.status, StatusCode::OK, "{}", pair.body);
    assert!(pair.body.contains(r#"id="reach-2""#), "{}", pair.body);
    // A dual package, stages in `find dual`'s own words.
    let dual = site
        .get(
            "/api/design?form=dual&first=pulse:250ms&second=steered:1ms:200us&tol=5%25",
            Some(&s),
        )
        .await;
    assert_eq!(dual.status, StatusCode::OK, "{}", dual.body);
    let dual = dual.json();
    assert_eq!(
        dual["reach_svg"].as_array().map(Vec::len),
        Some(1),
        "{dual}"
    );
    // Bad input: a pulse as long as the period, a stage in no known form, a missing stage.
    for bad in [
        "/design?form=pair&freq=10Hz&width=100ms",
        "/design?form=dual&first=pulse:250ms&second=wobble:3Hz",
        "/design?form=dual&first=pulse:250ms",
    ] {
        let r = site.get(bad, Some(&s)).await;
        assert_eq!(r.status, StatusCode::BAD_REQUEST, "{bad}: {}", r.body);
    }
}

#[tokio::test]
async fn organisers_import_with_a_preview_recount_manage_members_and_filter_the_log() {
    let site = Site::new(Options::default());
    let o = site.login("olga").await;
    let csv = "kind,value,bin,quantity\nresistor,10k,B1,25\n";
    let preview = site
        .form(
            "/import",
            Some(&o),
            &[("csv", csv), ("dry_run", "1")],
            Some(&o.csrf),
        )
        .await;
    assert_eq!(preview.status, StatusCode::OK);
    assert!(
        preview.body.contains("Preview: would create 1"),
        "{}",
        preview.body
    );
    let count = |site: &Site| {
        site.store()
            .parts(&onhand::store::PartFilter::default())
            .expect("p")
            .len()
    };
    assert_eq!(count(&site), 2);
    let done = site
        .form("/import", Some(&o), &[("csv", csv)], Some(&o.csrf))
        .await;
    assert!(done.body.contains("Imported: created 1"), "{}", done.body);
    assert_eq!(count(&site), 3);
    let bad = site
        .form(
            "/import",
            Some(&o),
            &[("csv", "kind,value,quantity\nresistor,zz,1\n")],
            Some(&o.csrf),
        )
        .await;
    assert_eq!(bad.status, StatusCode::UNPROCESSABLE_ENTITY, "{}", bad.body);
    // Rows are numbered as a spreadsheet shows them: the header is row 1.
    assert!(bad.body.contains("row 2"), "{}", bad.body);
    assert_eq!(count(&site), 3);
    site.form(
        &format!("/part/{}/recount", site.r4k7),
        Some(&o),
        &[("counted", "44")],
        Some(&o.csrf),
    )
    .await;
    assert_eq!(site.quantity(site.r4k7), (44, 0));
    let add = site
        .form(
            "/members",
            Some(&o),
            &[("name", "carl"), ("password", "carl's long password")],
            Some(&o.csrf),
        )
        .await;
    assert_eq!(add.status, StatusCode::SEE_OTHER);
    assert!(site.get("/members", Some(&o)).await.body.contains("carl"));
    let short = site
        .form(
            "/members",
            Some(&o),
            &[("name", "dora"), ("password", "short")],
            Some(&o.csrf),
        )
        .await;
    assert_eq!(short.status, StatusCode::BAD_REQUEST);
    site.form(
        "/members/remove",
        Some(&o),
        &[("name", "carl")],
        Some(&o.csrf),
    )
    .await;
    assert!(!site.get("/members", Some(&o)).await.body.contains("carl"));
    let a = site.login("alice").await;
    site.form(
        &format!("/part/{}/take", site.c100n),
        Some(&a),
        &[("qty", "2")],
        Some(&a.csrf),
    )
    .await;
    let log = site.get("/api/log?who=alice", Some(&o)).await.json();
    let entries = log["entries"].as_array().expect("entries");
    assert_eq!(entries.len(), 1);
    assert_eq!(entries[0]["delta"], -2);
    let page = site.get("/log?why=recount", Some(&o)).await;
    assert!(
        page.body.contains("web: recount") && !page.body.contains("web: take"),
        "{}",
        page.body
    );
    assert_eq!(
        site.get("/log?since=yesterday", Some(&o)).await.status,
        StatusCode::BAD_REQUEST
    );
    // The page reads times as `onhand log` does (one function, `Store::time_bound`): an age
    // and a local date both work; a future date finds nothing.
    let recent = site.get("/api/log?who=alice&since=1h", Some(&o)).await;
    assert_eq!(recent.status, StatusCode::OK, "{}", recent.body);
    assert_eq!(recent.json()["entries"].as_array().map(Vec::len), Some(1));
    let future = site
        .get("/api/log?who=alice&since=2999-01-01", Some(&o))
        .await
        .json();
    assert_eq!(future["entries"].as_array().map(Vec::len), Some(0));
    // The unit filter (a hold's member) that `store::log` has and the old page log lacked.
    let none = site.get("/api/log?unit=unit%209", Some(&o)).await.json();
    assert_eq!(none["entries"].as_array().map(Vec::len), Some(0), "{none}");
}

#[test]
fn member_command_adds_lists_sets_passwords_from_stdin_and_removes() {
    let b = Bench::new();
    b.run(&["member", "add", "ada", "--organiser"])
        .ok()
        .stdout_has("organiser");
    b.run(&["member", "add", "ADA"])
        .code(2)
        .stderr_has("already");
    let mut cmd = onhand();
    cmd.arg("--db")
        .arg(b.db())
        .args(["member", "password", "ada"])
        .write_stdin("a long password\n");
    crate::util::Run::from(cmd)
        .ok()
        .stdout_has("password set for ada");
    let mut short = onhand();
    short
        .arg("--db")
        .arg(b.db())
        .args(["member", "password", "ada"])
        .write_stdin("short\n");
    crate::util::Run::from(short)
        .code(2)
        .stderr_has("8 to 1024");
    let list = b.run(&["--json", "member", "list"]).ok().json();
    assert_eq!(list[0]["name"], "ada");
    assert_eq!(list[0]["has_password"], true);
    let store = Store::open(&b.db()).expect("open");
    let (_, phc) = store.member_with_password("ada").expect("q").expect("ada");
    assert!(phc.expect("hash").starts_with("$argon2id$"));
    drop(store);
    b.run(&["member", "remove", "ada"]).ok();
    b.run(&["member", "list"]).ok().stdout_has("no members yet");
    b.run(&["serve", "--help"]).ok().stdout_has("Examples:");
}

#[test]
fn serve_stops_cleanly_on_a_signal_with_no_caution_on_loopback() {
    use std::io::{BufRead, BufReader, Read, Write};
    let b = Bench::new();
    let bin = assert_cmd::cargo::cargo_bin!("onhand");
    let mut child = std::process::Command::new(bin)
        .arg("--db")
        .arg(b.db())
        .args(["serve", "--listen", "127.0.0.1:0", "--open-read"])
        .stdout(std::process::Stdio::piped())
        .spawn()
        .expect("spawn");
    let mut out = BufReader::new(child.stdout.take().expect("stdout"));
    let mut first = String::new();
    out.read_line(&mut first).expect("line");
    assert!(!first.contains("caution"), "{first}");
    let addr = first
        .split("http://")
        .nth(1)
        .and_then(|t| t.split('/').next())
        .expect("address")
        .to_string();
    let mut conn = std::net::TcpStream::connect(&addr).expect("connect");
    conn.set_read_timeout(Some(Duration::from_secs(10)))
        .expect("timeout");
    write!(
        conn,
        "GET /?q=4k7 HTTP/1.1\r\nHost: x\r\nConnection: close\r\n\r\n"
    )
    .expect("send");
    let mut answer = String::new();
    conn.read_to_string(&mut answer).expect("read");
    assert!(answer.starts_with("HTTP/1.1 200"), "{answer}");
    let pid = child.id().to_string();
    let killed = std::process::Command::new("kill")
        .args(["-INT", &pid])
        .status()
        .expect("kill");
    assert!(killed.success());
    let status = child.wait().expect("wait");
    let mut rest = String::new();
    out.read_to_string(&mut rest).expect("rest");
    assert!(status.success(), "{status:?} {rest}");
    assert!(rest.contains("stopped"), "{rest}");
}

/// One HTTP/1.1 exchange over TLS to `addr`, trusting only `ca_der`; the whole answer.
async fn https_exchange(
    addr: std::net::SocketAddr,
    ca_der: &[u8],
    request: &str,
) -> std::io::Result<String> {
    use tokio::io::{AsyncReadExt as _, AsyncWriteExt as _};
    let mut roots = rustls::RootCertStore::empty();
    roots
        .add(rustls_pki_types::CertificateDer::from(ca_der.to_vec()))
        .map_err(std::io::Error::other)?;
    let provider = std::sync::Arc::new(rustls::crypto::ring::default_provider());
    let config = rustls::ClientConfig::builder_with_provider(provider)
        .with_safe_default_protocol_versions()
        .map_err(std::io::Error::other)?
        .with_root_certificates(roots)
        .with_no_client_auth();
    let connector = tokio_rustls::TlsConnector::from(std::sync::Arc::new(config));
    let tcp = tokio::net::TcpStream::connect(addr).await?;
    let name =
        rustls_pki_types::ServerName::try_from("localhost").map_err(std::io::Error::other)?;
    let mut tls = connector.connect(name, tcp).await?;
    tls.write_all(request.as_bytes()).await?;
    let mut answer = Vec::new();
    let read = tokio::time::timeout(Duration::from_secs(10), tls.read_to_end(&mut answer)).await;
    match read {
        Ok(Ok(_)) => {}
        // Some servers end TLS without close_notify; what arrived is the answer.
        Ok(Err(e)) if e.kind() == std::io::ErrorKind::UnexpectedEof => {}
        Ok(Err(e)) => return Err(e),
        Err(_) => return Err(std::io::Error::other("no answer in 10 s")),
    }
    Ok(String::from_utf8_lossy(&answer).into_owned())
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn built_in_tls_serves_https_and_marks_the_session_cookie_secure() {
    // A self-signed certificate made here (rcgen), trusted by this test's client only.
    let cert = rcgen::generate_simple_self_signed(vec!["localhost".to_string()]).expect("cert");
    let cert_pem = cert.cert.pem();
    let key_pem = cert.signing_key.serialize_pem();
    let config = onhand::web::tls_config(cert_pem.as_bytes(), key_pem.as_bytes()).expect("tls");
    let dir = tempfile::tempdir().expect("tmp");
    let db = dir.path().join("stock.db");
    seed(&db);
    let pool = Pool::open(db, 2, Duration::from_millis(2000)).expect("pool");
    // The options do not ask for Secure: serving over TLS must turn it on by itself.
    let state = AppState::new(pool, Options::default());
    let listener = std::net::TcpListener::bind("127.0.0.1:0").expect("bind");
    let addr = listener.local_addr().expect("addr");
    let (stop, stopped) = tokio::sync::oneshot::channel::<()>();
    let server = tokio::spawn(onhand::web::serve_tls(listener, config, state, async {
        let _ = stopped.await;
    }));
    let body = serde_json::json!({"name": "alice", "password": PASSWORD}).to_string();
    let login = format!(
        "POST /api/login HTTP/1.1\r\nHost: localhost\r\nContent-Type: application/json\r\n\
         Content-Length: {}\r\nConnection: close\r\n\r\n{body}",
        body.len()
    );
    let answer = https_exchange(addr, cert.cert.der(), &login)
        .await
        .expect("https login");
    assert!(answer.starts_with("HTTP/1.1 200"), "{answer}");
    let set_cookie = answer
        .lines()
        .find(|l| l.to_ascii_lowercase().starts_with("set-cookie:"))
        .unwrap_or_else(|| panic!("no cookie: {answer}"));
    assert!(set_cookie.contains("; Secure"), "{set_cookie}");
    assert!(set_cookie.contains("HttpOnly"), "{set_cookie}");
    let pair = set_cookie
        .split_once(':')
        .map(|(_, v)| v.trim())
        .and_then(|v| v.split(';').next())
        .expect("pair")
        .to_string();
    // The cookie works over the same HTTPS: the stock page reads the 4k7 row.
    let page = format!(
        "GET /?q=4k7 HTTP/1.1\r\nHost: localhost\r\nCookie: {pair}\r\nConnection: close\r\n\r\n"
    );
    let answer = https_exchange(addr, cert.cert.der(), &page)
        .await
        .expect("https page");
    assert!(answer.starts_with("HTTP/1.1 200"), "{answer}");
    assert!(answer.contains("A3"), "the 4k7 row's bin: {answer}");
    // A client that does not trust this certificate gets no answer at all.
    let other = rcgen::generate_simple_self_signed(vec!["localhost".to_string()]).expect("cert");
    assert!(
        https_exchange(addr, other.cert.der(), &page).await.is_err(),
        "an untrusted certificate must fail the handshake"
    );
    stop.send(()).expect("stop");
    tokio::time::timeout(Duration::from_secs(10), server)
        .await
        .expect("stops")
        .expect("joined")
        .expect("served");
}

/// The built count of `onhand --json plan KIT [--units N]` on the site's own database (the
/// command line's plan computation, which the page must agree with).
fn cli_plan(site: &Site, kit: &std::path::Path, units: Option<&str>) -> serde_json::Value {
    let mut cmd = onhand();
    cmd.arg("--db")
        .arg(site.db())
        .args(["--json", "plan"])
        .arg(kit);
    if let Some(u) = units {
        cmd.args(["--units", u]);
    }
    let run = crate::util::Run::from(cmd);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{e}: {}", run.stderr))
}

#[tokio::test]
async fn a_plan_file_is_counted_and_held_unit_by_unit_by_the_member_who_posts_it() {
    let (site, s) = cabinet_site().await;
    let kit = repo_path("sample-stock/blinker-kit.toml");
    let text = std::fs::read_to_string(&kit).expect("kit");
    // The count the command line gives on the same stock (tests/plan.rs: all 25 kits).
    let cli = cli_plan(&site, &kit, None);
    let built = cli["built"].as_u64().expect("built");
    let a = site
        .form("/plan", Some(&s), &[("plan", &text)], Some(&s.csrf))
        .await;
    assert_eq!(a.status, StatusCode::OK, "{}", a.body);
    let want = format!("The stock builds <strong>{built}</strong> of 25 units of plan blinker kit");
    assert!(a.body.contains(&want), "{}", a.body);
    assert!(a.body.contains("id=\"plan-takes\""), "{}", a.body);
    assert!(
        site.store()
            .holds(&Default::default())
            .expect("holds")
            .is_empty()
    );
    // The command line says what two units take; the page holds exactly that.
    let two = cli_plan(&site, &kit, Some("2"));
    let pieces: u64 = two["takes"]
        .as_array()
        .expect("takes")
        .iter()
        .map(|t| t["pieces"].as_u64().expect("pieces"))
        .sum();
    let h = site
        .form(
            "/plan",
            Some(&s),
            &[("plan", &text), ("units", "2"), ("hold", "1")],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(h.status, StatusCode::SEE_OTHER, "{}", h.body);
    assert!(h.location().starts_with("/holds?done="), "{}", h.location());
    let holds = site
        .store()
        .holds(&onhand::store::HoldFilter {
            plan: Some("blinker kit".into()),
            ..Default::default()
        })
        .expect("holds");
    let mut members: Vec<&str> = holds.iter().map(|h| h.member.as_str()).collect();
    members.dedup();
    assert_eq!(members, ["unit 1", "unit 2"]);
    assert!(holds.iter().all(|h| h.who == "alice"), "{holds:?}");
    let held: i64 = holds.iter().map(|h| h.quantity).sum();
    assert_eq!(u64::try_from(held).expect("held"), pieces);
    let log = site
        .store()
        .log(&onhand::store::LogFilter {
            plan: Some("blinker kit".into()),
            ..Default::default()
        })
        .expect("log");
    assert!(!log.is_empty());
    assert!(log.iter().all(|l| l.entry.who == "alice"), "{log:?}");
    // Holding again holds nothing more (the plan's own holds count as its stock).
    site.form(
        "/plan",
        Some(&s),
        &[("plan", &text), ("units", "2"), ("hold", "1")],
        Some(&s.csrf),
    )
    .await;
    let again: i64 = site
        .store()
        .holds(&Default::default())
        .expect("holds")
        .iter()
        .map(|h| h.quantity)
        .sum();
    assert_eq!(again, held);
    // "My holds" shows the units, and each is used or released on its own.
    let page = site.get("/holds", Some(&s)).await;
    assert!(page.body.contains("blinker kit · unit 1"), "{}", page.body);
    assert!(page.body.contains("blinker kit · unit 2"), "{}", page.body);
    let one: i64 = holds
        .iter()
        .filter(|h| h.member == "unit 1")
        .map(|h| h.quantity)
        .sum();
    let used = site
        .form(
            "/holds/use",
            Some(&s),
            &[("plan", "blinker kit"), ("member", "unit 1")],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(used.status, StatusCode::SEE_OTHER, "{}", used.body);
    let rel = site
        .form(
            "/holds/release",
            Some(&s),
            &[("plan", "blinker kit"), ("member", "unit 2")],
            Some(&s.csrf),
        )
        .await;
    assert_eq!(rel.status, StatusCode::SEE_OTHER, "{}", rel.body);
    let store = site.store();
    assert!(store.holds(&Default::default()).expect("holds").is_empty());
    assert_eq!(store.built_units("blinker kit").expect("built"), [1]);
    let used_pieces: i64 = store
        .log(&onhand::store::LogFilter {
            plan: Some("blinker kit".into()),
            ..Default::default()
        })
        .expect("log")
        .iter()
        .filter(|l| l.entry.delta < 0)
        .map(|l| -l.entry.delta)
        .sum();
    assert_eq!(used_pieces, one);
}

#[tokio::test]
async fn a_plan_file_is_refused_without_the_token_a_login_or_a_readable_file() {
    let (site, s) = cabinet_site().await;
    let text = std::fs::read_to_string(repo_path("sample-stock/blinker-kit.toml")).expect("kit");
    let ledger = |site: &Site| site.store().log(&Default::default()).expect("log").len();
    let before = ledger(&site);
    let fields = [("plan", text.as_str()), ("units", "2"), ("hold", "1")];
    for csrf in [None, Some("0000")] {
        let a = site.form("/plan", Some(&s), &fields, csrf).await;
        assert_eq!(a.status, StatusCode::FORBIDDEN, "{}", a.body);
    }
    let anon = site.form("/plan", None, &fields, Some(&s.csrf)).await;
    assert_eq!(anon.location(), "/login");
    assert_eq!(site.get("/plan", None).await.location(), "/login");
    for (bad, says) in [
        ("name = \"x\"\nunits = \"many\"\n", "plan file"),
        ("", "paste or choose a plan file"),
        (
            "name = \"x\"\nunits = 2\nfamily = \"valve\"\nsupply = \"9 V\"\ntolerance = \"5%\"\n\
             [[stage]]\nname = \"a\"\nform = \"pulse\"\nwidth = \"30 ms\"\n",
            "family",
        ),
    ] {
        let a = site
            .form(
                "/plan",
                Some(&s),
                &[("plan", bad), ("hold", "1")],
                Some(&s.csrf),
            )
            .await;
        assert_eq!(a.status, StatusCode::BAD_REQUEST, "{bad:?}: {}", a.body);
        assert!(a.body.contains(says), "{bad:?}: {}", a.body);
    }
    let big = [("plan", text.as_str()), ("units", "0"), ("hold", "1")];
    let a = site.form("/plan", Some(&s), &big, Some(&s.csrf)).await;
    assert_eq!(a.status, StatusCode::BAD_REQUEST, "{}", a.body);
    assert!(
        site.store()
            .holds(&Default::default())
            .expect("holds")
            .is_empty()
    );
    assert_eq!(ledger(&site), before);
    // The form itself is there for a member, with its token.
    let page = site.get("/plan", Some(&s)).await;
    assert_eq!(page.status, StatusCode::OK);
    assert!(page.body.contains(&s.csrf), "{}", page.body);
}

#[tokio::test]
async fn the_api_takes_the_plan_file_as_its_body_counts_and_holds() {
    let (site, s) = cabinet_site().await;
    let kit = repo_path("sample-stock/blinker-kit.toml");
    let text = std::fs::read_to_string(&kit).expect("kit");
    let post = |path: &str, body: &str, csrf: bool| {
        let mut b = Request::post(path)
            .header(header::CONTENT_TYPE, "application/toml")
            .header(header::COOKIE, &s.cookie);
        if csrf {
            b = b.header("x-csrf-token", &s.csrf);
        }
        b.body(Body::from(body.to_string())).expect("req")
    };
    let no = site.send(post("/api/plans?hold=1", &text, false)).await;
    assert_eq!(no.status, StatusCode::FORBIDDEN, "{}", no.body);
    let bad = site
        .send(post("/api/plans?hold=1", "units = [", true))
        .await;
    assert_eq!(bad.status, StatusCode::BAD_REQUEST, "{}", bad.body);
    assert!(bad.json()["error"].as_str().is_some(), "{}", bad.body);
    let odd = site.send(post("/api/plans?units=two", &text, true)).await;
    assert_eq!(odd.status, StatusCode::BAD_REQUEST, "{}", odd.body);
    assert!(
        site.store()
            .holds(&Default::default())
            .expect("holds")
            .is_empty()
    );
    // The count agrees with `onhand plan --units 3` on the same database.
    let cli = cli_plan(&site, &kit, Some("3"));
    let a = site
        .send(post("/api/plans?units=3&hold=1", &text, true))
        .await;
    assert_eq!(a.status, StatusCode::OK, "{}", a.body);
    let j = a.json();
    assert_eq!(j["built"], cli["built"], "{j}");
    assert_eq!(j["wanted"], 3, "{j}");
    assert_eq!(j["held"]["plan"], "blinker kit", "{j}");
    let holds = site.store().holds(&Default::default()).expect("holds");
    let mut units: Vec<&str> = holds.iter().map(|h| h.member.as_str()).collect();
    units.dedup();
    assert_eq!(units, ["unit 1", "unit 2", "unit 3"]);
    assert!(holds.iter().all(|h| h.who == "alice"), "{holds:?}");
}
