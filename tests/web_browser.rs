//! A real browser on the web page: Debian's headless `chromium` driven over WebDriver
//! (`chromium-driver`) with fantoccini. Alice logs in on a phone-sized window, searches `4k7`,
//! takes 3 and sees the count drop, holds 2; Bob's own session sees Alice's hold; both log
//! out; an organiser's pages are opened too. Every page is screenshotted (into a temp dir, or
//! `ONHAND_SCREENSHOTS` when set) and each picture is checked not blank.
//! Skips with a message when chromium or chromedriver is missing, unless
//! `ONHAND_REQUIRE_EXTERNAL=1` (then it fails).

use crate::util::{external_required, repo_path};
use crate::web::{PASSWORD, seed};
use fantoccini::{Client, ClientBuilder, Locator};
use onhand::store::{Store, read_csv};
use onhand::web::{AppState, Options, Pool, serve};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

fn find_program(names: &[&str]) -> Option<PathBuf> {
    names.iter().find_map(|n| {
        let out = Command::new("sh")
            .args(["-c", &format!("command -v {n}")])
            .output()
            .ok()?;
        let p = String::from_utf8_lossy(&out.stdout).trim().to_string();
        (out.status.success() && !p.is_empty()).then(|| PathBuf::from(p))
    })
}

/// Kills chromedriver when the test ends, however it ends.
struct Driver(Child);

impl Drop for Driver {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

fn free_port() -> u16 {
    std::net::TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .map(|a| a.port())
        .expect("a free loopback port")
}

async fn browser(driver: &str, profile: &Path) -> Client {
    let mut caps = serde_json::Map::new();
    caps.insert(
        "goog:chromeOptions".into(),
        serde_json::json!({
            "args": [
                "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                "--disable-component-update", "--disable-sync", "--no-first-run",
                "--disable-dev-shm-usage", "--window-size=412,915",
                format!("--user-data-dir={}", profile.display()),
            ]
        }),
    );
    let connector = hyper_util::client::legacy::connect::HttpConnector::new();
    let c = ClientBuilder::new(connector)
        .capabilities(caps)
        .connect(driver)
        .await
        .expect("a chromium session over WebDriver");
    let _ = c.set_window_size(412, 915).await;
    c
}

/// A screenshot that is a real picture: a PNG with several colours and ink on a good share of
/// the pixels (a blank or failed render is one flat colour).
fn check_not_blank(png_bytes: &[u8], name: &str, dir: &Path) {
    std::fs::write(dir.join(format!("{name}.png")), png_bytes).expect("save screenshot");
    let decoder = png::Decoder::new(std::io::Cursor::new(png_bytes));
    let mut reader = decoder.read_info().expect("a PNG");
    let mut buf = vec![0; reader.output_buffer_size().expect("size")];
    let info = reader.next_frame(&mut buf).expect("frame");
    let bytes = &buf[..info.buffer_size()];
    let step = info.color_type.samples();
    let pixels: Vec<&[u8]> = bytes.chunks(step).collect();
    let first = pixels.first().copied().unwrap_or_default();
    let differ = pixels.iter().filter(|p| **p != first).count();
    let mut colours: Vec<&[u8]> = pixels.iter().step_by(97).copied().collect();
    colours.sort();
    colours.dedup();
    assert!(
        info.width >= 300 && info.height >= 300,
        "{name}: {}×{}",
        info.width,
        info.height
    );
    assert!(colours.len() >= 4, "{name}: only {} colours", colours.len());
    assert!(
        differ * 50 > pixels.len(),
        "{name}: {differ} of {} pixels differ from the first",
        pixels.len()
    );
}

async fn text(c: &Client, css: &str) -> String {
    c.find(Locator::Css(css))
        .await
        .unwrap_or_else(|e| panic!("{css}: {e}"))
        .text()
        .await
        .expect("text")
}

async fn login(c: &Client, base: &str, name: &str) {
    c.goto(&format!("{base}/login")).await.expect("login page");
    c.find(Locator::Css("#name"))
        .await
        .expect("name")
        .send_keys(name)
        .await
        .expect("type");
    c.find(Locator::Css("#password"))
        .await
        .expect("pw")
        .send_keys(PASSWORD)
        .await
        .expect("type");
    c.find(Locator::Css("#go"))
        .await
        .expect("button")
        .click()
        .await
        .expect("click");
    wait_for(c, "#me").await;
    assert_eq!(text(c, "#me").await, name);
}

async fn wait_for(c: &Client, css: &str) {
    let until = Instant::now() + Duration::from_secs(10);
    while Instant::now() < until {
        if c.find(Locator::Css(css)).await.is_ok() {
            return;
        }
        tokio::time::sleep(Duration::from_millis(100)).await;
    }
    let src = c.source().await.unwrap_or_default();
    panic!("{css} never appeared; page:\n{src}");
}

async fn set(c: &Client, css: &str, value: &str) {
    let e = c.find(Locator::Css(css)).await.expect(css);
    e.clear().await.expect("clear");
    e.send_keys(value).await.expect("type");
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_member_takes_from_a_phone_and_another_sees_the_hold() {
    let (Some(chrome), Some(chromedriver)) = (
        find_program(&["chromium", "chromium-browser", "google-chrome"]),
        find_program(&["chromedriver"]),
    ) else {
        assert!(
            !external_required(),
            "chromium and chromedriver are required here (ONHAND_REQUIRE_EXTERNAL=1): \
             apt-get install chromium chromium-driver"
        );
        eprintln!(
            "SKIPPED: chromium or chromedriver not found; apt-get install chromium chromium-driver"
        );
        return;
    };
    let _ = chrome;
    let dir = tempfile::tempdir().expect("tmp");
    let shots = std::env::var_os("ONHAND_SCREENSHOTS")
        .map_or_else(|| dir.path().join("shots"), PathBuf::from);
    std::fs::create_dir_all(&shots).expect("screenshot dir");
    let db = dir.path().join("stock.db");
    let (r4k7, _) = seed(&db);
    {
        // A fuller cabinet, so the stock and design pages look as they would at a makerspace.
        let csv =
            std::fs::read_to_string(repo_path("sample-stock/makerspace-cabinet.csv")).expect("csv");
        let mut s = Store::open(&db).expect("open");
        s.import(&read_csv(&csv).expect("csv"), "cabinet", "olga", false)
            .expect("import");
    }
    let pool = Pool::open(db.clone(), 4, Duration::from_secs(2)).expect("pool");
    let listener = tokio::net::TcpListener::bind("127.0.0.1:0")
        .await
        .expect("bind loopback");
    let base = format!("http://{}", listener.local_addr().expect("addr"));
    let (stop_tx, stop_rx) = tokio::sync::oneshot::channel::<()>();
    let server = tokio::spawn(serve(
        listener,
        AppState::new(pool, Options::default()),
        async {
            let _ = stop_rx.await;
        },
    ));

    let port = free_port();
    let driver = Driver(
        Command::new(&chromedriver)
            .arg(format!("--port={port}"))
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .expect("start chromedriver"),
    );
    let until = Instant::now() + Duration::from_secs(20);
    while std::net::TcpStream::connect(("127.0.0.1", port)).is_err() {
        assert!(Instant::now() < until, "chromedriver did not start");
        std::thread::sleep(Duration::from_millis(100));
    }
    let url = format!("http://127.0.0.1:{port}");

    let alice = browser(&url, &dir.path().join("profile-a")).await;
    alice.goto(&format!("{base}/")).await.expect("home");
    wait_for(&alice, "#go").await; // anonymous: sent to the login page
    check_not_blank(&alice.screenshot().await.expect("shot"), "1-login", &shots);
    login(&alice, &base, "alice").await;
    set(&alice, "#q", "4k7").await;
    alice
        .find(Locator::Css("#search"))
        .await
        .expect("search")
        .click()
        .await
        .expect("click");
    wait_for(&alice, "#parts").await;
    check_not_blank(
        &alice.screenshot().await.expect("shot"),
        "2-stock-4k7",
        &shots,
    );
    alice
        .find(Locator::Css(&format!("tr[data-part='{r4k7}'] a")))
        .await
        .expect("the seeded 4k7 row")
        .click()
        .await
        .expect("open part");
    wait_for(&alice, "#free").await;
    let before: i64 = text(&alice, "#free")
        .await
        .split_whitespace()
        .next()
        .and_then(|t| t.parse().ok())
        .expect("count");
    set(&alice, "#take-qty", "3").await;
    alice
        .find(Locator::Css("#take"))
        .await
        .expect("take")
        .click()
        .await
        .expect("click");
    wait_for(&alice, "#note").await;
    assert!(text(&alice, "#note").await.contains("Took 3"));
    let after: i64 = text(&alice, "#shelf").await.parse().expect("count");
    assert_eq!(after, before - 3, "the shelf count dropped by 3");
    set(&alice, "#hold-qty", "2").await;
    alice
        .find(Locator::Css("#hold"))
        .await
        .expect("hold")
        .click()
        .await
        .expect("click");
    wait_for(&alice, "#holds").await;
    check_not_blank(
        &alice.screenshot().await.expect("shot"),
        "3-part-after-take-and-hold",
        &shots,
    );
    alice.goto(&format!("{base}/holds")).await.expect("holds");
    wait_for(&alice, ".plan").await;
    check_not_blank(
        &alice.screenshot().await.expect("shot"),
        "4-my-holds",
        &shots,
    );
    alice
        .goto(&format!("{base}/design?form=pulse&width=250ms"))
        .await
        .expect("design");
    wait_for(&alice, "#report").await;
    // The reach picture of the free stock (beside the waveform when a design is found; at
    // ±1 % this cabinet has none, and the reach picture shows why).
    wait_for(&alice, "#reach svg").await;
    check_not_blank(&alice.screenshot().await.expect("shot"), "5-design", &shots);
    // A pair (an astable triggering a one-shot): two stages, two reach pictures.
    alice
        .goto(&format!(
            "{base}/design?form=pair&freq=10Hz&width=20ms&tol=5%25"
        ))
        .await
        .expect("design pair");
    wait_for(&alice, "#report").await;
    wait_for(&alice, "#reach-2 svg").await;
    check_not_blank(
        &alice.screenshot().await.expect("shot"),
        "5b-design-pair",
        &shots,
    );

    let bob = browser(&url, &dir.path().join("profile-b")).await;
    login(&bob, &base, "bob").await;
    bob.goto(&format!("{base}/part/{r4k7}"))
        .await
        .expect("part");
    wait_for(&bob, "#holds").await;
    assert_eq!(
        text(&bob, "#holds td.who").await,
        "alice",
        "Bob sees Alice's hold"
    );
    assert_eq!(text(&bob, "#shelf").await, after.to_string());
    check_not_blank(
        &bob.screenshot().await.expect("shot"),
        "6-part-seen-by-bob",
        &shots,
    );
    for c in [&alice, &bob] {
        c.find(Locator::Css("#logout"))
            .await
            .expect("logout")
            .click()
            .await
            .expect("click");
        wait_for(c, "#go").await;
    }
    // Logged out: the holds page sends Bob back to the login form.
    bob.goto(&format!("{base}/holds")).await.expect("holds");
    wait_for(&bob, "#go").await;

    login(&bob, &base, "olga").await;
    for (path, wait, name) in [
        ("/import", "#csv", "7-import"),
        ("/members", "#members", "8-members"),
        ("/log?who=alice", "#history", "9-log-alice"),
    ] {
        bob.goto(&format!("{base}{path}")).await.expect("page");
        wait_for(&bob, wait).await;
        check_not_blank(&bob.screenshot().await.expect("shot"), name, &shots);
    }
    assert!(text(&bob, "#history").await.contains("web: take"));

    alice.close().await.expect("close");
    bob.close().await.expect("close");
    drop(driver);
    let _ = stop_tx.send(());
    server.await.expect("server task").expect("server");
    let s = Store::open(&db).expect("open");
    let log = s
        .log(&onhand::store::LogFilter {
            who: Some("alice".into()),
            ..Default::default()
        })
        .expect("log");
    assert_eq!(
        log.iter()
            .rev()
            .map(|e| (e.entry.delta, e.entry.held_delta))
            .collect::<Vec<_>>(),
        vec![(0, 2), (-3, 0)]
    );
}
