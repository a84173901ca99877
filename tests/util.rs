//! Test harness: a temp dir with its own store, a fluent runner for the built binary, and the
//! switch that turns "external tool missing" from a skip into a failure under `.ci/run`.

#![allow(dead_code)]

use assert_cmd::Command;
use std::path::{Path, PathBuf};

/// A scratch directory with a database path inside it.
pub struct Bench {
    pub dir: tempfile::TempDir,
}

impl Bench {
    /// A fresh scratch directory; the store is created by the first command that needs it.
    pub fn new() -> Self {
        Self {
            dir: tempfile::tempdir().expect("temp dir"),
        }
    }

    /// The database file of this bench.
    pub fn db(&self) -> PathBuf {
        self.dir.path().join("stock.db")
    }

    /// A file path inside the bench.
    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    /// Write a file inside the bench and return its path.
    pub fn write(&self, name: &str, text: &str) -> PathBuf {
        let p = self.path(name);
        std::fs::write(&p, text).expect("write test file");
        p
    }

    /// `onhand --db <this bench's db> ARGS…` as the user `tester` (from `ONHAND_USER`, which
    /// every command accepts; `--user` itself is refused on commands that change nothing).
    pub fn run(&self, args: &[&str]) -> Run {
        let mut cmd = onhand();
        cmd.arg("--db").arg(self.db()).env("ONHAND_USER", "tester");
        cmd.args(args);
        Run::from(cmd)
    }

    /// Import one of the bundled sample stocks into this bench's store.
    pub fn with_sample(self, name: &str) -> Self {
        let csv = repo_path(&format!("sample-stock/{name}"));
        self.run(&["import", csv.to_str().expect("utf-8 path")])
            .ok();
        self
    }
}

/// The built `onhand` binary with a clean environment for the variables it reads.
pub fn onhand() -> Command {
    let mut cmd = Command::new(assert_cmd::cargo::cargo_bin!("onhand"));
    cmd.env_remove("ONHAND_DB")
        .env_remove("ONHAND_USER")
        .env("NO_COLOR", "1");
    cmd
}

/// A path inside the repository.
pub fn repo_path(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// The finished run of a command.
pub struct Run {
    pub status: i32,
    pub stdout: String,
    pub stderr: String,
}

impl From<Command> for Run {
    fn from(mut cmd: Command) -> Self {
        let out = cmd.output().expect("run onhand");
        Run {
            status: out.status.code().unwrap_or(-1),
            stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
            stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
        }
    }
}

impl Run {
    /// Expect exit code `code`; show both streams when it differs.
    pub fn code(self, code: i32) -> Self {
        assert_eq!(
            self.status, code,
            "exit status\n--- stdout\n{}\n--- stderr\n{}",
            self.stdout, self.stderr
        );
        self
    }
    /// Expect success (exit 0).
    pub fn ok(self) -> Self {
        self.code(0)
    }
    /// Expect stdout to contain `text`.
    pub fn stdout_has(self, text: &str) -> Self {
        assert!(
            self.stdout.contains(text),
            "stdout lacks {text:?}:\n{}",
            self.stdout
        );
        self
    }
    /// Expect stderr to contain `text`.
    pub fn stderr_has(self, text: &str) -> Self {
        assert!(
            self.stderr.contains(text),
            "stderr lacks {text:?}:\n{}",
            self.stderr
        );
        self
    }
    /// Parse stdout as JSON.
    pub fn json(&self) -> serde_json::Value {
        serde_json::from_str(&self.stdout)
            .unwrap_or_else(|e| panic!("stdout is not JSON ({e}):\n{}", self.stdout))
    }
}

/// Whether a missing external tool must fail the test (set by `.ci/run`) rather than skip it.
pub fn external_required() -> bool {
    std::env::var("ONHAND_REQUIRE_EXTERNAL").is_ok_and(|v| v == "1")
}

/// Skip (return false, with a message) or fail when an external tool is missing.
pub fn have_tool(program: &str, probe_args: &[&str]) -> bool {
    let found = std::process::Command::new(program)
        .args(probe_args)
        .output()
        .is_ok_and(|o| o.status.success());
    if !found {
        assert!(
            !external_required(),
            "{program} is required here (ONHAND_REQUIRE_EXTERNAL=1) but was not found"
        );
        eprintln!("SKIPPED: {program} not found; install it to run this cross-check");
    }
    found
}

impl Bench {
    /// Start one `onhand --db <this bench's db> --user USER ARGS…` process per entry, all held
    /// at a barrier file and released together, and wait for every one. For races between
    /// members over the same stock.
    pub fn race(&self, barrier: &str, runs: &[(&str, Vec<String>)]) -> Vec<std::process::Output> {
        let go = self.path(barrier);
        let children: Vec<_> = runs
            .iter()
            .map(|(who, args)| {
                std::process::Command::new("sh")
                    .arg("-c")
                    .arg("while [ ! -e \"$1\" ]; do :; done; shift; exec \"$@\"")
                    .arg("sh")
                    .arg(&go)
                    .arg(assert_cmd::cargo::cargo_bin!("onhand"))
                    .arg("--db")
                    .arg(self.db())
                    .env("ONHAND_USER", who)
                    .args(args)
                    .env_remove("ONHAND_DB")
                    .stdout(std::process::Stdio::piped())
                    .stderr(std::process::Stdio::piped())
                    .spawn()
                    .expect("spawn a racer")
            })
            .collect();
        std::fs::write(&go, "").expect("barrier");
        children
            .into_iter()
            .map(|c| c.wait_with_output().expect("wait for a racer"))
            .collect()
    }
}

/// The newest schema version this build knows (what `init` reports on a fresh store).
pub fn latest_schema() -> String {
    let dir = tempfile::tempdir().expect("temp dir");
    let store = onhand::store::Store::open(&dir.path().join("v.db")).expect("open");
    format!(
        "schema version {}",
        store.schema_version().expect("version")
    )
}
