//! The `report` command end to end: synthesise, replay, fit, report; the page checked as text
//! and rendered in headless Chromium (screenshot not blank, no console errors, every section
//! in the DOM). Also the plot command's time window.
//!
//! Chromium is looked up as `$CLAMPWISE_CHROMIUM`, `chromium`, `chromium-browser`,
//! `google-chrome`. When none is found the rendering test is skipped with a loud message,
//! unless `CLAMPWISE_REQUIRE_CHROMIUM` is set (as `scripts/test-all.sh` does): then it fails.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

use std::time::{Duration, Instant};

use common::{DEMO, replay, run, scratch, write};

/// Synthesise a short hoist trace with a stuck channel, replay it, fit; returns
/// (config, estimate, coverage) paths.
fn inputs(d: &Path) -> (String, String, String) {
    let cfg = write(d, "demo.toml", DEMO);
    let tr = d.join("trace.csv").display().to_string();
    let (c, _, e) = run(&[
        "-q",
        "synth",
        "-c",
        &cfg,
        "-o",
        &tr,
        "--duration-s",
        "60",
        "--fault",
        "stuck:2@20..21",
    ]);
    assert_eq!(c, 0, "{e}");
    let est = d.join("run <1> & 'a'.csv").display().to_string();
    let (c, _, e) = replay(&cfg, &tr, &est, &[]);
    assert_eq!(c, 0, "{e}");
    let cov = d.join("coverage.csv").display().to_string();
    let (c, _, e) = run(&["-q", "fit", "-c", &cfg, &tr, "--coverage-csv", &cov]);
    assert_eq!(c, 0, "{e}");
    (cfg, est, cov)
}

fn report(d: &Path) -> PathBuf {
    let (cfg, est, cov) = inputs(d);
    let out = d.join("report.html");
    let (c, o, e) = run(&[
        "-q",
        "report",
        "-c",
        &cfg,
        &est,
        "--coverage-csv",
        &cov,
        "-o",
        &out.display().to_string(),
    ]);
    assert_eq!(c, 0, "{e}");
    assert!(o.contains("not a certified safety function"), "{o}");
    out
}

#[test]
fn report_page_has_its_sections_and_escapes_file_names() {
    let d = scratch("report-text");
    let out = report(&d);
    let html = std::fs::read_to_string(&out).unwrap();
    for id in clampwise_sim::report::render::SECTIONS {
        assert!(html.contains(&format!("<section id=\"{id}\">")), "{id}");
    }
    assert!(html.contains("run &lt;1&gt; &amp; &#39;a&#39;.csv"));
    assert!(!html.contains("run <1>"));
    let lower = html.to_ascii_lowercase();
    assert!(
        !lower.contains("<script") && !lower.contains("http://") && !lower.contains("https://")
    );
    // The input's hash is the file's: [pub] FIPS 180-4 SHA-256, checked against the sha2 crate
    // through the module's own FIPS test vectors; here the page must name the same digest.
    let est = d.join("run <1> & 'a'.csv").display().to_string();
    let (h, _) = clampwise_sim::report::provenance::sha256_file(&est).unwrap();
    assert!(html.contains(&h));
    // No partial file left beside a complete report.
    assert!(!d.join("report.html.partial").exists());
    // The stuck channel raises a flag the timeline names.
    assert!(html.contains("times raised"));
}

#[test]
fn report_rejects_a_bad_window_and_standard_input() {
    let d = scratch("report-usage");
    let cfg = write(&d, "demo.toml", DEMO);
    let out = d.join("r.html").display().to_string();
    let (c, _, e) = run(&[
        "-q", "report", "-c", &cfg, "x.csv", "-o", &out, "--from-s", "5", "--to-s", "1",
    ]);
    assert_eq!(c, 1, "{e}");
    assert!(e.contains("--from-s"), "{e}");
    let (c, _, e) = run(&["-q", "report", "-c", &cfg, "-", "-o", &out]);
    assert_eq!(c, 1, "{e}");
    assert!(!Path::new(&out).exists());
}

#[test]
fn plot_time_window() {
    let d = scratch("plot-window");
    let (_, est, _) = inputs(&d);
    let svg = d.join("w.svg").display().to_string();
    let (c, o, e) = run(&[
        "-q", "plot", &est, "-o", &svg, "--from-s", "10", "--to-s", "20",
    ]);
    assert_eq!(c, 0, "{e}");
    // [calc] 10.000 … 20.000 s at the demo's 1 kHz: 10 001 rows of 60 000.
    assert!(o.contains("plotted 10001 of 60000 rows"), "{o}");
    let (c, _, e) = run(&["-q", "plot", &est, "-o", &svg, "--from-s", "100"]);
    assert_eq!(c, 1, "{e}");
}

fn find_chromium() -> Option<PathBuf> {
    let mut names: Vec<String> = Vec::new();
    if let Ok(p) = std::env::var("CLAMPWISE_CHROMIUM") {
        names.push(p);
    }
    names.extend(["chromium", "chromium-browser", "google-chrome"].map(String::from));
    for n in names {
        let p = PathBuf::from(&n);
        if p.is_absolute() && p.exists() {
            return Some(p);
        }
        if let Some(paths) = std::env::var_os("PATH") {
            for dir in std::env::split_paths(&paths) {
                let c = dir.join(&n);
                if c.is_file() {
                    return Some(c);
                }
            }
        }
    }
    None
}

/// Run Chromium headless on `page` with extra arguments; (stdout, stderr). Killed after 180 s.
/// Its output goes to files (a pipe nobody reads would fill up and stall it).
fn chromium(bin: &Path, profile: &Path, page: &Path, extra: &[&str]) -> (String, String) {
    let url = format!("file://{}", page.display());
    std::fs::create_dir_all(profile).unwrap();
    let (out_path, err_path) = (profile.join("stdout.txt"), profile.join("stderr.txt"));
    let mut cmd = Command::new(bin);
    cmd.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--enable-logging=stderr",
        "--v=0",
        &format!("--user-data-dir={}", profile.display()),
    ])
    .args(extra)
    .arg(&url)
    .stdin(Stdio::null())
    .stdout(std::fs::File::create(&out_path).unwrap())
    .stderr(std::fs::File::create(&err_path).unwrap());
    let mut child = cmd.spawn().expect("start chromium");
    let start = Instant::now();
    loop {
        if child.try_wait().expect("wait chromium").is_some() {
            break;
        }
        if start.elapsed() > Duration::from_secs(180) {
            let _ = child.kill();
            panic!("chromium did not finish within 180 s");
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    let read =
        |p: &Path| String::from_utf8_lossy(&std::fs::read(p).unwrap_or_default()).into_owned();
    (read(&out_path), read(&err_path))
}

#[test]
fn report_renders_in_headless_chromium() {
    let Some(bin) = find_chromium() else {
        if std::env::var_os("CLAMPWISE_REQUIRE_CHROMIUM").is_some() {
            panic!("CLAMPWISE_REQUIRE_CHROMIUM is set but no chromium was found");
        }
        eprintln!(
            "\n!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!\n\
             SKIPPED report_renders_in_headless_chromium: no chromium found\n\
             (install the Debian package `chromium`, or set CLAMPWISE_CHROMIUM=/path)\n\
             !!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!\n"
        );
        return;
    };
    let d = scratch("report-chromium");
    let page = report(&d);

    // The DOM as Chromium parsed it: every section and the inline plots are there.
    let (dom, err) = chromium(&bin, &d.join("profile-dom"), &page, &["--dump-dom"]);
    for id in clampwise_sim::report::render::SECTIONS {
        assert!(
            dom.contains(&format!("id=\"{id}\"")),
            "section {id} missing from the DOM\n{err}"
        );
    }
    assert!(dom.matches("<svg").count() >= 2, "inline plots missing");

    // A screenshot: decoded, it must not be blank.
    let shot = d.join("shot.png");
    let (_, err) = chromium(
        &bin,
        &d.join("profile-shot"),
        &page,
        &[
            &format!("--screenshot={}", shot.display()),
            "--window-size=1400,2400",
            "--hide-scrollbars",
        ],
    );
    // Console messages are logged as "CONSOLE(line)"; the page has no script, so any is an
    // error of the page.
    for l in err.lines() {
        assert!(
            !(l.contains(":CONSOLE") || l.contains("Uncaught")),
            "console message: {l}"
        );
    }
    let f = std::fs::File::open(&shot).unwrap_or_else(|e| panic!("no screenshot ({e}):\n{err}"));
    let dec = png::Decoder::new(std::io::BufReader::new(f));
    let mut reader = dec.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert!(
        info.width >= 1000 && info.height >= 1000,
        "{}×{}",
        info.width,
        info.height
    );
    let channels = info.color_type.samples();
    let px = &buf[..info.buffer_size()];
    let lum: Vec<f64> = px
        .chunks(channels)
        .map(|c| {
            let g = |k: usize| f64::from(c.get(k).copied().unwrap_or(0));
            // [pub] ITU-R BT.601 luma weights.
            0.299 * g(0) + 0.587 * g(1) + 0.114 * g(2)
        })
        .collect();
    let n = lum.len() as f64;
    let mean = lum.iter().sum::<f64>() / n;
    let var = lum.iter().map(|l| (l - mean).powi(2)).sum::<f64>() / n;
    let dark = lum.iter().filter(|&&l| l < 128.0).count() as f64 / n;
    // A blank page has zero variance; text, tables and the caution box give far more.
    assert!(
        var > 100.0,
        "screenshot looks blank: variance {var:.1}, mean {mean:.1}"
    );
    assert!(dark > 0.005, "hardly any dark pixels: {dark}");
}
