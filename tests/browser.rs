//! The demo report in a real browser: headless Chromium renders the HTML page to a PNG, the page
//! logs nothing to the console, makes no network request of its own (Chromium's network log is
//! read; the browser's own background traffic is told apart by its isolation key), and every
//! chart in the DOM the browser built holds data points.
//!
//! Needs Debian's `chromium` (CI installs it). Without it the test says so and passes, unless
//! `PLUMB_REQUIRE_BROWSER=1` (set by CI), where a missing browser fails it.

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

fn chromium() -> Option<PathBuf> {
    let candidates = [
        std::env::var("PLUMB_CHROMIUM").ok().map(PathBuf::from),
        Some(PathBuf::from("/usr/bin/chromium")),
        Some(PathBuf::from("/usr/bin/chromium-browser")),
    ];
    candidates.into_iter().flatten().find(|p| p.exists())
}

fn browser(bin: &Path, profile: &Path, extra: &[String], page: &Path) -> std::process::Output {
    Command::new(bin)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(extra)
        .arg(format!("file://{}", page.display()))
        .output()
        .expect("chromium runs")
}

/// URLs the page itself asked for: requests whose network isolation key is the page's
/// (file://) site and whose URL is not the page's own file.
fn page_requests(netlog: &serde_json::Value) -> Vec<String> {
    let mut out = Vec::new();
    let Some(events) = netlog["events"].as_array() else {
        return out;
    };
    for e in events {
        let p = &e["params"];
        let (Some(url), Some(key)) = (p["url"].as_str(), p["network_isolation_key"].as_str())
        else {
            continue;
        };
        if key.contains("file://") && !url.starts_with("file:") && !url.starts_with("data:") {
            out.push(url.to_string());
        }
    }
    out
}

#[test]
fn demo_report_renders_in_chromium_without_errors_or_requests() {
    let Some(bin) = chromium() else {
        assert!(
            std::env::var("PLUMB_REQUIRE_BROWSER").as_deref() != Ok("1"),
            "PLUMB_REQUIRE_BROWSER=1 but no chromium found"
        );
        eprintln!("skipped: no chromium (install Debian's chromium package to run this test)");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("demo.html");
    let out = Command::new(env!("CARGO_BIN_EXE_plumb"))
        .args([
            "profile",
            "demo-data/larkspur/replies-2026-W40.tsv.zst",
            "--html",
        ])
        .arg(&page)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );

    // Render to a PNG with the network log on.
    let png = dir.path().join("demo.png");
    let netlog = dir.path().join("net.json");
    let shot = browser(
        &bin,
        &dir.path().join("profile-a"),
        &[
            "--window-size=1200,1600".into(),
            format!("--screenshot={}", png.display()),
            format!("--log-net-log={}", netlog.display()),
        ],
        &page,
    );
    let log = String::from_utf8_lossy(&shot.stderr);
    let console: Vec<&str> = log.lines().filter(|l| l.contains(":CONSOLE")).collect();
    assert!(console.is_empty(), "console messages: {console:#?}");
    let bytes = std::fs::read(&png).expect("a screenshot was written");
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    let (w, h) = (
        u32::from_be_bytes(bytes[16..20].try_into().unwrap()),
        u32::from_be_bytes(bytes[20..24].try_into().unwrap()),
    );
    assert_eq!((w, h), (1200, 1600));
    assert!(bytes.len() > 50_000, "a blank page compresses far smaller");
    let net: serde_json::Value =
        serde_json::from_slice(&std::fs::read(&netlog).expect("a network log was written"))
            .unwrap();
    let requests = page_requests(&net);
    assert!(requests.is_empty(), "the page fetched: {requests:?}");

    // The DOM as the browser built it: every chart present with its data points.
    let dom = browser(
        &bin,
        &dir.path().join("profile-b"),
        &["--dump-dom".into()],
        &page,
    );
    let dom = String::from_utf8(dom.stdout).unwrap();
    common::assert_charts_have_points(&dom);
}

#[test]
fn the_network_check_catches_a_fetching_page() {
    // The detector itself must be able to fail: a page with a remote image and a console error.
    let Some(bin) = chromium() else {
        eprintln!("skipped: no chromium");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("bad.html");
    std::fs::write(
        &page,
        r#"<html><body><img src="http://plumb.invalid/x.png"><script>console.error("boom")</script></body></html>"#,
    )
    .unwrap();
    let netlog = dir.path().join("net.json");
    let run = browser(
        &bin,
        &dir.path().join("p"),
        &[
            format!("--screenshot={}", dir.path().join("x.png").display()),
            format!("--log-net-log={}", netlog.display()),
        ],
        &page,
    );
    let log = String::from_utf8_lossy(&run.stderr);
    assert!(log.lines().any(|l| l.contains(":CONSOLE")), "{log}");
    let net: serde_json::Value = serde_json::from_slice(&std::fs::read(&netlog).unwrap()).unwrap();
    assert!(
        page_requests(&net)
            .iter()
            .any(|u| u.contains("plumb.invalid")),
        "the remote image was not seen"
    );
}
