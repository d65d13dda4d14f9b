//! End-to-end checks of `tapplan plan` and `tapplan verify`: every sample is planned, the PDF
//! is read back by readers outside this crate (`support/pdf_read.rs`: lopdf, pdf-extract and
//! hayro in every run; poppler-utils in the `#[ignore]`d `*_poppler` tests that `.ci/run` runs),
//! page 1 is compared with `tapplan size --json`, the plan is verified, reproduced byte for
//! byte, and refused or rejected where it must be.

#[path = "support/pdf_read.rs"]
mod pdf_read;

use std::path::{Path, PathBuf};

use pdf_read::{A4_PT, PdfReader, Poppler, RustReader, assert_pages_render_inside, flat};

use assert_cmd::Command;
use tapplan::output::pdf::{Attachment, attach_files, extract_attachment, list_attachments};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn sample(name: &str) -> PathBuf {
    root().join("samples").join(name)
}

fn tapplan() -> Command {
    Command::cargo_bin("tapplan").unwrap()
}

/// Runs `tapplan plan` and returns (exit code, stdout, stderr).
fn plan(args: &[&std::ffi::OsStr]) -> (i32, String, String) {
    let out = tapplan().arg("plan").args(args).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn verify(pdf: &Path) -> (i32, String, String) {
    let out = tapplan().arg("verify").arg(pdf).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn fmt_g(v: f64) -> String {
    let s = format!("{v:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The plan's side and top margins (18 mm, `layout::MARGIN`) and the lowest ink allowed at the
/// foot (14 mm: the footer's baseline sits 17 mm up, its descenders and rule above 14 mm).
const SIDE_MARGIN_PT: f64 = 18.0 * 72.0 / 25.4;
const FOOT_MARGIN_PT: f64 = 14.0 * 72.0 / 25.4;

/// Plans one sample, reads it back with `reader`, compares page 1 with `size --json`, verifies.
fn full_check(name: &str, reader: &dyn PdfReader) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("x.pdf");
    let src = sample(name);
    let (code, out, err) = plan(&[src.as_os_str(), "-o".as_ref(), pdf.as_os_str()]);
    assert_eq!(code, 0, "plan {name}: {out}{err}");
    let pages = reader.page_count(&pdf);
    assert!(pages >= 6, "{name}: only {pages} pages");
    let sizes = reader.page_sizes(&pdf);
    assert_eq!(sizes.len(), pages, "{name}: a size for every page");
    for (w, h) in sizes {
        assert!(
            (w - A4_PT.0).abs() < 0.01 && (h - A4_PT.1).abs() < 0.01,
            "{name}: page of {w} × {h} pt is not A4"
        );
    }
    let texts = reader.page_texts(&pdf);
    assert_eq!(texts.len(), pages, "{name}: text for every page");
    for (i, t) in texts.iter().enumerate() {
        let t = flat(t);
        assert!(
            t.contains(&format!("page {} of {pages}", i + 1)),
            "{name}: page {} lacks its footer:\n{t}",
            i + 1
        );
    }
    let info = reader.info(&pdf);
    let scheme = tapplan::scheme::load_file(&src).unwrap().scheme;
    assert!(
        info.get("Title")
            .is_some_and(|t| t.starts_with("Water supply plan") && t.contains(&scheme.info.name)),
        "{name}: info {info:?}"
    );
    let attached = reader.attachments(&pdf);
    let names: Vec<&str> = attached.iter().map(|(n, _)| n.as_str()).collect();
    assert!(names.contains(&"figures.json"), "{name}: {names:?}");
    let yaml = attached
        .iter()
        .find(|(n, _)| n == "scheme.yaml")
        .unwrap_or_else(|| panic!("{name}: no scheme.yaml in {names:?}"));
    assert_eq!(
        yaml.1,
        std::fs::read(&src).unwrap(),
        "{name}: embedded scheme differs from the file"
    );

    // page 1 against `size --json`
    let page1 = flat(&texts[0]);
    let size = tapplan()
        .args(["size"])
        .arg(&src)
        .args(["--json", "-"])
        .output()
        .unwrap();
    assert_eq!(size.status.code(), Some(0));
    let j: serde_json::Value = serde_json::from_slice(&size.stdout).expect("size --json");
    let chosen = &j["chosen"];
    let tank = chosen["design"]["tank_m3"].as_f64().unwrap();
    assert!(
        page1.contains(&format!("{} m³", fmt_g(tank))),
        "{name}: page 1 lacks the tank {tank} m³:\n{page1}"
    );
    let units = chosen["design"]["units"].as_array().unwrap();
    for (p, n) in scheme.pumps.iter().zip(units) {
        let n = n.as_u64().unwrap();
        if n > 0 {
            let want = format!("{n} × {}", p.name);
            assert!(
                page1.contains(&want),
                "{name}: page 1 lacks {want}:\n{page1}"
            );
        }
    }
    for key in ["first_year", "horizon_year"] {
        let h = j["report"][key]["judged_shortfall_hours"].as_f64().unwrap();
        let want = format!("{h:.0} h short");
        assert!(
            page1.contains(&want),
            "{name}: page 1 lacks {want}:\n{page1}"
        );
    }

    // verify passes
    let (code, out, err) = verify(&pdf);
    assert_eq!(code, 0, "verify {name}: {out}{err}");
    assert!(
        out.contains("figures match") && out.contains("bytes match"),
        "{out}"
    );

    // --extract round-trips the exact bytes, and refuses to overwrite without --force
    let back = dir.path().join("back.yaml");
    tapplan()
        .arg("verify")
        .arg(&pdf)
        .arg("--extract")
        .arg(&back)
        .assert()
        .code(0);
    assert_eq!(std::fs::read(&back).unwrap(), std::fs::read(&src).unwrap());
    std::fs::write(&back, b"keep me").unwrap();
    let out = tapplan()
        .arg("verify")
        .arg(&pdf)
        .arg("--extract")
        .arg(&back)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--force"));
    assert_eq!(std::fs::read(&back).unwrap(), b"keep me");
    tapplan()
        .arg("verify")
        .arg(&pdf)
        .arg("--extract")
        .arg(&back)
        .arg("--force")
        .assert()
        .code(0);
    assert_eq!(std::fs::read(&back).unwrap(), std::fs::read(&src).unwrap());
    (dir, pdf)
}

/// Two tests per sample: read back with the pure-Rust readers (and every page rendered inside
/// the margins), and with poppler (ignored unless asked for; `.ci/run` asks).
macro_rules! sample_tests {
    ($rust:ident, $poppler:ident, $file:literal) => {
        #[test]
        fn $rust() {
            let (_dir, pdf) = full_check($file, &RustReader);
            assert_pages_render_inside(&pdf, SIDE_MARGIN_PT, FOOT_MARGIN_PT);
        }

        #[test]
        #[ignore = "needs poppler-utils; .ci/run runs it with --ignored"]
        fn $poppler() {
            full_check($file, &Poppler);
        }
    };
}

sample_tests!(
    kessa_plan_reads_back_matches_size_and_verifies,
    kessa_plan_reads_back_with_poppler,
    "kessa-ridge-solar.yaml"
);
sample_tests!(
    sabuya_plan_reads_back_matches_size_and_verifies,
    sabuya_plan_reads_back_with_poppler,
    "sabuya-handpumps.yaml"
);
sample_tests!(
    tolomba_plan_reads_back_matches_size_and_verifies,
    tolomba_plan_reads_back_with_poppler,
    "tolomba-market-generator.yaml"
);
sample_tests!(
    wendi_plan_reads_back_matches_size_and_verifies,
    wendi_plan_reads_back_with_poppler,
    "wendi-hamlet-ram.yaml"
);
sample_tests!(
    lomari_plan_reads_back_matches_size_and_verifies,
    lomari_plan_reads_back_with_poppler,
    "lomari-helical-rotor.yaml"
);
sample_tests!(
    tarumo_plan_reads_back_matches_size_and_verifies,
    tarumo_plan_reads_back_with_poppler,
    "tarumo-hamlet-oscillating.yaml"
);

#[test]
fn every_sample_is_covered() {
    let mut names: Vec<String> = std::fs::read_dir(root().join("samples"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".yaml"))
        .collect();
    names.sort();
    assert_eq!(
        names,
        [
            "kessa-ridge-solar.yaml",
            "lomari-helical-rotor.yaml",
            "sabuya-handpumps.yaml",
            "tarumo-hamlet-oscillating.yaml",
            "tolomba-market-generator.yaml",
            "wendi-hamlet-ram.yaml"
        ],
        "a sample was added or renamed: give it a test above"
    );
}

#[test]
fn two_runs_give_identical_bytes_and_stdout_matches_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let src = sample("tolomba-market-generator.yaml");
    let a = dir.path().join("a.pdf");
    let b = dir.path().join("b.pdf");
    assert_eq!(plan(&[src.as_os_str(), "-o".as_ref(), a.as_os_str()]).0, 0);
    assert_eq!(plan(&[src.as_os_str(), "-o".as_ref(), b.as_os_str()]).0, 0);
    let a = std::fs::read(a).unwrap();
    assert_eq!(a, std::fs::read(b).unwrap());
    let out = tapplan()
        .arg("plan")
        .arg(&src)
        .args(["-o", "-"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    assert_eq!(out.stdout, a, "-o - writes the same PDF to standard output");
    let names = list_attachments(&a).unwrap();
    assert!(names.contains(&"scheme.yaml".to_string()), "{names:?}");
    assert!(names.contains(&"figures.json".to_string()), "{names:?}");
    let fig: serde_json::Value =
        serde_json::from_slice(&extract_attachment(&a, "figures.json").unwrap().unwrap()).unwrap();
    let size = tapplan()
        .args(["size"])
        .arg(&src)
        .args(["--json", "-"])
        .output()
        .unwrap();
    let j: serde_json::Value = serde_json::from_slice(&size.stdout).expect("size --json");
    assert_eq!(
        fig["tank_m3"].as_f64(),
        j["chosen"]["design"]["tank_m3"].as_f64(),
        "the plan's figures carry the tank `size` chose: {fig}"
    );
    assert!(fig["overrides"].is_null());
}

#[test]
fn fixed_design_is_planned_repeated_and_verified() {
    let dir = tempfile::tempdir().unwrap();
    let src = sample("kessa-ridge-solar.yaml");
    let pdf = dir.path().join("fixed.pdf");
    // A design too small for the target: exit 1, and the PDF still says so.
    let (code, out, err) = plan(&[
        src.as_os_str(),
        "-o".as_ref(),
        pdf.as_os_str(),
        "--tank-m3".as_ref(),
        "60".as_ref(),
        "--pumps".as_ref(),
        "SolarSub-9=1".as_ref(),
        "--array-kwp".as_ref(),
        "6".as_ref(),
    ]);
    assert_eq!(code, 1, "{out}{err}");
    let page1 = flat(&RustReader.page_texts(&pdf)[0]);
    assert!(page1.contains("NOT MET"), "{page1}");
    assert!(page1.contains("does NOT meet"), "{page1}");
    assert!(page1.contains("60 m³"), "{page1}");
    let bytes = std::fs::read(&pdf).unwrap();
    let fig: serde_json::Value =
        serde_json::from_slice(&extract_attachment(&bytes, "figures.json").unwrap().unwrap())
            .unwrap();
    assert_eq!(fig["overrides"]["tank_m3"].as_f64(), Some(60.0), "{fig}");
    // verify repeats the overrides: both match
    let (code, out, err) = verify(&pdf);
    assert_eq!(code, 0, "{out}{err}");
}

#[test]
fn altered_embedded_scheme_fails_verification() {
    let dir = tempfile::tempdir().unwrap();
    let src = sample("tolomba-market-generator.yaml");
    let pdf = dir.path().join("t.pdf");
    assert_eq!(
        plan(&[src.as_os_str(), "-o".as_ref(), pdf.as_os_str()]).0,
        0
    );
    let bytes = std::fs::read(&pdf).unwrap();
    let yaml =
        String::from_utf8(extract_attachment(&bytes, "scheme.yaml").unwrap().unwrap()).unwrap();
    assert!(yaml.contains("population: 6100"));
    let altered = yaml.replace("population: 6100", "population: 7400");
    let rebuilt = attach_files(
        bytes,
        &[Attachment {
            name: "scheme.yaml".into(),
            mime: "application/yaml".into(),
            bytes: altered.into_bytes(),
            description: "altered".into(),
        }],
    )
    .unwrap();
    let bad = dir.path().join("bad.pdf");
    std::fs::write(&bad, rebuilt).unwrap();
    let (code, out, err) = verify(&bad);
    assert_eq!(code, 1, "{out}{err}");
    assert!(out.contains("figures DIFFER"), "{out}");
    assert!(out.contains("scheme_sha256"), "{out}");
    assert!(out.contains("shortfall_hours_horizon_year"), "{out}");
    assert!(out.contains("bytes DIFFER"), "{out}");
}

#[test]
fn verify_refuses_a_pdf_without_a_scheme_and_a_non_pdf() {
    let dir = tempfile::tempdir().unwrap();
    let plain = dir.path().join("plain.pdf");
    let doc = tapplan::output::pdf::Document {
        title: "No scheme".into(),
        ..Default::default()
    };
    let bytes = tapplan::output::pdf::document_to_pdf(&doc, &tapplan::output::pdf::Meta::default())
        .unwrap();
    std::fs::write(&plain, bytes).unwrap();
    let (code, _, err) = verify(&plain);
    assert_eq!(code, 2);
    assert!(err.contains("no embedded scheme"), "{err}");
    let junk = dir.path().join("junk.pdf");
    std::fs::write(&junk, b"not a pdf at all").unwrap();
    let (code, _, err) = verify(&junk);
    assert_eq!(code, 2);
    assert!(err.contains("cannot be read"), "{err}");
    let (code, _, err) = verify(&dir.path().join("missing.pdf"));
    assert_eq!(code, 2);
    assert!(err.contains("cannot read"), "{err}");
}

#[test]
fn output_onto_the_input_or_into_a_missing_folder_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let src = dir.path().join("s.yaml");
    std::fs::copy(sample("wendi-hamlet-ram.yaml"), &src).unwrap();
    let before = std::fs::read(&src).unwrap();
    let (code, _, err) = plan(&[src.as_os_str(), "-o".as_ref(), src.as_os_str()]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("input"), "{err}");
    assert_eq!(std::fs::read(&src).unwrap(), before, "input unchanged");

    let missing = dir.path().join("no-such-folder").join("p.pdf");
    let (code, _, err) = plan(&[src.as_os_str(), "-o".as_ref(), missing.as_os_str()]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("does not exist"), "{err}");
    assert!(!missing.exists());
}

#[test]
fn an_existing_output_is_replaced_only_by_a_complete_plan() {
    let dir = tempfile::tempdir().unwrap();
    let src = dir.path().join("s.yaml");
    std::fs::copy(sample("wendi-hamlet-ram.yaml"), &src).unwrap();
    let out = dir.path().join("p.pdf");
    std::fs::write(&out, b"old plan").unwrap();
    // a failing run (bad override) leaves the old file as it was
    let (code, _, err) = plan(&[
        src.as_os_str(),
        "-o".as_ref(),
        out.as_os_str(),
        "--pumps".as_ref(),
        "NoSuchPump=1".as_ref(),
    ]);
    assert_eq!(code, 2, "{err}");
    assert_eq!(std::fs::read(&out).unwrap(), b"old plan");
    // a successful run replaces it whole, leaving no temporary files
    let (code, o, err) = plan(&[src.as_os_str(), "-o".as_ref(), out.as_os_str()]);
    assert_eq!(code, 0, "{o}{err}");
    let new = std::fs::read(&out).unwrap();
    assert!(new.starts_with(b"%PDF-"));
    assert!(new.ends_with(b"%%EOF\n") || new.ends_with(b"%%EOF"));
    let left: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".tmp"))
        .collect();
    assert!(left.is_empty(), "{left:?}");
    // an unreadable scheme is bad input
    let (code, _, _) = plan(&[
        dir.path().join("none.yaml").as_os_str(),
        "-o".as_ref(),
        out.as_os_str(),
    ]);
    assert_eq!(code, 2);
    assert_eq!(std::fs::read(&out).unwrap(), new);
}

#[test]
fn weather_file_travels_in_the_pdf_and_verify_uses_it() {
    let dir = tempfile::tempdir().unwrap();
    let sub = dir.path().join("met");
    std::fs::create_dir(&sub).unwrap();
    std::fs::copy(
        root().join("tests/data/weather/invented_two_years.csv"),
        sub.join("two.csv"),
    )
    .unwrap();
    let text = std::fs::read_to_string(sample("kessa-ridge-solar.yaml")).unwrap();
    let text = text.replace(
        "  mode: synthetic\n  seed: 20261120\n  years: 30\n",
        "  mode: file\n  file: met/two.csv\n",
    );
    assert!(text.contains("met/two.csv"));
    let src = dir.path().join("k.yaml");
    std::fs::write(&src, &text).unwrap();
    let pdf = dir.path().join("k.pdf");
    let (code, out, err) = plan(&[
        src.as_os_str(),
        "-o".as_ref(),
        pdf.as_os_str(),
        "--tank-m3".as_ref(),
        "300".as_ref(),
        "--pumps".as_ref(),
        "SolarSub-9=2".as_ref(),
        "--array-kwp".as_ref(),
        "18".as_ref(),
    ]);
    assert!(code == 0 || code == 1, "{out}{err}");
    let bytes = std::fs::read(&pdf).unwrap();
    let names = list_attachments(&bytes).unwrap();
    assert!(names.contains(&"weather-two.csv".to_string()), "{names:?}");
    assert_eq!(
        extract_attachment(&bytes, "weather-two.csv")
            .unwrap()
            .unwrap(),
        std::fs::read(sub.join("two.csv")).unwrap()
    );
    // the original weather file is gone: verify must use the embedded one
    std::fs::remove_file(sub.join("two.csv")).unwrap();
    let (code, out, err) = verify(&pdf);
    assert_eq!(code, 0, "{out}{err}");
}

/// When the file states a design, page 1 shows it beside the recommended one with the rules
/// each fails, so a reader sees what changed.
#[test]
fn page_one_shows_the_proposed_design_beside_the_recommended_one() {
    let dir = tempfile::tempdir().unwrap();
    let src = sample("tolomba-market-generator.yaml");
    let pdf = dir.path().join("t.pdf");
    let (code, out, err) = plan(&[src.as_os_str(), "-o".as_ref(), pdf.as_os_str()]);
    assert_eq!(code, 0, "{out}{err}");
    let page1 = flat(&RustReader.page_texts(&pdf)[0]);
    let scheme = tapplan::scheme::load_file(&src).unwrap().scheme;
    let file_design = tapplan::simulate::Design::from_scheme(&scheme).unwrap();
    for needle in [
        "proposed in the file",
        "recommended",
        "rules failed",
        "water per person",
        &file_design.describe(&scheme),
    ] {
        assert!(page1.contains(needle), "page 1 lacks {needle:?}:\n{page1}");
    }
}
