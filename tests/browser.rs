//! The demo's report in a real browser: headless Chromium (the distribution's package) loads
//! `index.html`, at a desk width and a phone width, and a check script injected into a copy of
//! the page reports, once every figure has loaded or failed: every image loaded (an SVG that
//! does not parse fails to load), nothing is wider than the page, and no script error
//! happened. A screenshot of the whole page is written to `target/browser-test/` for the
//! record.
//!
//! Ignored by default (it needs the browser and runs the demo): `.ci/run` installs Chromium
//! and runs it with `cargo test --release --test browser -- --ignored`. Without a browser it
//! fails; it never passes silently.

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

/// The checks, run in the page once everything has loaded: images are made eager (the page
/// loads them lazily), each is awaited, then the verdict is written into the page, which the
/// browser then prints.
const CHECK: &str = r#"<script>
(function () {
  var errors = [];
  window.addEventListener('error', function (e) { errors.push(String(e.message || e)); });
  window.addEventListener('load', function () {
    var imgs = Array.prototype.slice.call(document.images);
    imgs.forEach(function (i) { i.loading = 'eager'; });
    Promise.all(imgs.map(function (i) {
      return i.complete ? Promise.resolve() : new Promise(function (ok) {
        i.addEventListener('load', ok); i.addEventListener('error', ok);
      });
    })).then(function () {
      var broken = imgs.filter(function (i) { return !(i.complete && i.naturalWidth > 0); })
        .map(function (i) { return i.getAttribute('src'); });
      var doc = document.documentElement;
      var wide = Array.prototype.slice.call(document.querySelectorAll('body *'))
        .filter(function (e) { var r = e.getBoundingClientRect(); return r.right > doc.clientWidth + 1 && getComputedStyle(e).position !== 'fixed' && !e.closest('.table-wrap'); })
        .slice(0, 5).map(function (e) { return e.tagName + (e.id ? '#' + e.id : '') + (e.className ? '.' + e.className : ''); });
      var out = document.createElement('pre');
      out.id = 'seine-check';
      out.textContent = 'images=' + imgs.length + '\nbroken=' + broken.join(' ') +
        '\npage_width=' + doc.clientWidth + '\nscroll_width=' + doc.scrollWidth +
        '\nwide=' + wide.join(' ') + '\nheight=' + doc.scrollHeight + '\nerrors=' + errors.join(' | ') + '\n';
      document.body.appendChild(out);
    });
  });
})();
</script>"#;

/// Chromium from the distribution (`chromium`, or `chromium-browser` on some systems), or the
/// binary named by SEINE_CHROMIUM.
fn chromium() -> PathBuf {
    if let Ok(p) = std::env::var("SEINE_CHROMIUM") {
        return PathBuf::from(p);
    }
    for name in ["chromium", "chromium-browser"] {
        let found = Command::new("sh")
            .args(["-c", &format!("command -v {name}")])
            .output()
            .ok()
            .filter(|o| o.status.success())
            .map(|o| String::from_utf8_lossy(&o.stdout).trim().to_string());
        if let Some(p) = found.filter(|p| !p.is_empty()) {
            return PathBuf::from(p);
        }
    }
    panic!(
        "no chromium on PATH (nor SEINE_CHROMIUM): install the distribution's package \
         (Debian: apt-get install chromium), as .ci/run does"
    );
}

/// Headless Chromium with the given extra arguments on `url`, with a fresh profile; its
/// standard output.
fn headless(args: &[String], url: &str) -> String {
    let profile = tempfile::tempdir().unwrap();
    let mut cmd = Command::new(chromium());
    cmd.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--hide-scrollbars",
    ])
    .arg(format!("--user-data-dir={}", profile.path().display()))
    .args(args)
    .arg(url);
    let o = cmd.output().expect("run chromium");
    assert!(
        o.status.success(),
        "chromium failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// The check's verdict, key by key.
fn verdict(dom: &str) -> std::collections::HashMap<String, String> {
    let start = dom.find("<pre id=\"seine-check\">").unwrap_or_else(|| {
        panic!(
            "the check did not finish; the page printed:\n{}",
            &dom[..dom.len().min(2000)]
        )
    });
    let body = &dom[start + 22..];
    let body = &body[..body.find("</pre>").expect("closed")];
    body.lines()
        .filter_map(|l| l.split_once('='))
        .map(|(k, v)| (k.to_string(), v.trim().to_string()))
        .collect()
}

/// A copy of the report's page beside it, with the check script.
fn checked_copy(index: &Path) -> PathBuf {
    let html = std::fs::read_to_string(index).unwrap();
    let copy = index.with_file_name("browser-check.html");
    std::fs::write(&copy, html.replace("</body>", &format!("{CHECK}\n</body>"))).unwrap();
    copy
}

fn file_url(p: &Path) -> String {
    format!("file://{}", p.canonicalize().unwrap().display())
}

#[test]
#[ignore = "needs Chromium; .ci/run installs it and runs this test"]
fn the_demo_report_renders_in_a_browser() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("demo");
    let o = common::seine(&["demo", "--out", out.to_str().unwrap()]);
    assert!(o.status.success(), "demo: {}", common::stderr(&o));
    let page = checked_copy(&out.join("index.html"));
    let url = file_url(&page);
    let mut height = 0;
    for width in [1280, 390] {
        let dom = headless(
            &[
                format!("--window-size={width},1000"),
                "--virtual-time-budget=30000".into(),
                "--dump-dom".into(),
            ],
            &url,
        );
        let v = verdict(&dom);
        let images: usize = v["images"].parse().unwrap();
        assert!(images >= 20, "only {images} figures on the demo's page");
        assert!(
            v["broken"].is_empty(),
            "at {width} px, figures that did not load: {}",
            v["broken"]
        );
        assert!(v["errors"].is_empty(), "script errors: {}", v["errors"]);
        let (page_w, scroll_w): (u32, u32) = (v["page_width"].parse().unwrap(), v["scroll_width"].parse().unwrap());
        assert!(
            scroll_w <= page_w && v["wide"].is_empty(),
            "at {width} px the page is {scroll_w} px wide for a {page_w} px window; too wide: {}",
            v["wide"]
        );
        if width == 1280 {
            height = v["height"].parse().unwrap();
        }
    }
    // The whole page at desk width, for the record.
    let shots = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/browser-test");
    std::fs::create_dir_all(&shots).unwrap();
    let shot = shots.join("demo-report.png");
    let _ = std::fs::remove_file(&shot);
    headless(
        &[
            format!("--window-size=1280,{}", height.clamp(1000, 30000)),
            "--virtual-time-budget=30000".into(),
            format!("--screenshot={}", shot.display()),
        ],
        &url,
    );
    let size = std::fs::metadata(&shot).map(|m| m.len()).unwrap_or(0);
    assert!(size > 10_000, "no screenshot written ({size} bytes)");
    eprintln!("browser test: screenshot of the demo's report in {}", shot.display());
}
