//! Hostile text never reaches the report unescaped; no command ever writes to its inputs; a
//! report is never written into an input folder.

use std::path::{Path, PathBuf};
use std::process::Command;

fn scratch(name: &str) -> PathBuf {
    let p = std::env::temp_dir().join(format!("tellturn-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&p);
    std::fs::create_dir_all(&p).unwrap();
    p
}

/// A small set whose every text field carries markup or script.
fn hostile_set(dir: &Path) {
    let mut events = String::from("session,turn,actor,event,detail,score\n");
    let mut outcomes = String::from("session,winner,victory,variant\n");
    let a = "<b>Ama</b>";
    let b = "Bex\"><script>alert(2)</script>";
    for g in 0..40 {
        let id = format!("<script>alert({g})</script>");
        for t in 1..=12 {
            let (ea, eb) = if (g + t) % 3 == 0 {
                ("<img src=x onerror=alert(1)>", "pass")
            } else {
                ("pass", "<img src=x onerror=alert(1)>")
            };
            events.push_str(&format!(
                "\"{id}\",{t},\"{a}\",\"{ea}\",\"</svg><script>x()</script>\",{t}\n"
            ));
            events.push_str(&format!(
                "\"{id}\",{t},\"{}\",\"{eb}\",,{}\n",
                b.replace('"', "\"\""),
                g % 5
            ));
        }
        let winner = if g % 3 == 0 {
            b.replace('"', "\"\"")
        } else {
            a.to_string()
        };
        outcomes.push_str(&format!(
            "\"{id}\",\"{winner}\",\"<i>route</i>\",\"<u>V</u>\"\n"
        ));
    }
    std::fs::write(dir.join("events.csv"), events).unwrap();
    std::fs::write(dir.join("outcomes.csv"), outcomes).unwrap();
}

fn tellturn(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_tellturn"))
        .args(args)
        .output()
        .expect("run tellturn")
}

fn stamp(dir: &Path) -> Vec<(PathBuf, Vec<u8>, std::time::SystemTime)> {
    let mut out: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_file())
        .map(|p| {
            let bytes = std::fs::read(&p).unwrap();
            let mtime = std::fs::metadata(&p).unwrap().modified().unwrap();
            (p, bytes, mtime)
        })
        .collect();
    out.sort_by(|a, b| a.0.cmp(&b.0));
    out
}

#[test]
fn markup_and_script_in_every_field_are_escaped_in_the_report() {
    let input = scratch("hostile-in");
    hostile_set(&input);
    let out = scratch("hostile-out");
    let o = tellturn(&[
        "report",
        input.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--bootstrap",
        "50",
        "-q",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let html = std::fs::read_to_string(out.join("report.html"))
        .unwrap()
        .to_lowercase();
    for raw in ["<script", "<img", "<b>ama", "<i>route", "<u>v"] {
        assert!(!html.contains(raw), "unescaped `{raw}` in report.html");
    }
    assert!(
        html.contains("&lt;script&gt;alert("),
        "session ids should appear escaped"
    );
    let _ = std::fs::remove_dir_all(&input);
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn no_command_modifies_its_inputs() {
    let input = scratch("readonly-in");
    hostile_set(&input);
    let before = stamp(&input);
    let work = scratch("readonly-out");
    let w = |name: &str| work.join(name).to_string_lossy().into_owned();
    let set = input.to_str().unwrap();
    for args in [
        vec!["check", set],
        vec!["check", "--json", set],
        vec!["train", set, "--model-out", &w("m.json"), "-q"],
        vec![
            "score",
            "--model",
            &w("m.json"),
            set,
            "--out",
            &w("s.csv"),
            "-q",
        ],
        vec!["features", set, "--out", &w("f.csv"), "-q"],
        vec!["report", set, "--out", &w("rep"), "--bootstrap", "20", "-q"],
    ] {
        let o = tellturn(&args);
        assert!(
            o.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        if args[0] == "train" {
            // Facilitators read the training summary too: it ends with the caution.
            let out = String::from_utf8_lossy(&o.stdout);
            assert!(
                out.contains("must not drive operational decisions"),
                "{out}"
            );
        }
    }
    assert_eq!(stamp(&input), before, "an input file changed");
    // No temporary file is left behind next to the outputs.
    let leftovers: Vec<_> = std::fs::read_dir(&work)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains("tellturn-tmp"))
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
    let _ = std::fs::remove_dir_all(&input);
    let _ = std::fs::remove_dir_all(&work);
}

#[test]
fn a_report_is_never_written_into_an_input_folder() {
    let input = scratch("into-input");
    hostile_set(&input);
    let inside = input.join("report");
    let o = tellturn(&[
        "report",
        input.to_str().unwrap(),
        "--out",
        inside.to_str().unwrap(),
        "--bootstrap",
        "20",
        "-q",
    ]);
    assert!(!o.status.success());
    assert!(String::from_utf8_lossy(&o.stderr).contains("never written into an input folder"));
    assert!(
        !inside.exists(),
        "nothing may be created inside the input folder"
    );
    let _ = std::fs::remove_dir_all(&input);
}

#[test]
fn check_exits_zero_for_usable_sets_and_one_for_unusable_ones() {
    let inputs = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/inputs");
    let ok = tellturn(&["check", inputs.join("nan").to_str().unwrap()]);
    assert_eq!(
        ok.status.code(),
        Some(0),
        "warnings alone keep a set usable"
    );
    let text = String::from_utf8_lossy(&ok.stdout);
    assert!(
        text.contains("events.csv:8: `NaN` in column `score`"),
        "{text}"
    );
    let bad = tellturn(&[
        "check",
        "--json",
        inputs.join("missing_column").to_str().unwrap(),
    ]);
    assert_eq!(bad.status.code(), Some(1));
    let json: serde_json::Value = serde_json::from_slice(&bad.stdout).expect("JSON");
    assert_eq!(json[0]["usable"], false);
    assert_eq!(json[0]["problems"][0]["kind"], "missing_column");
}

#[test]
fn ctrl_c_stops_a_report_and_leaves_no_output() {
    let out = scratch("ctrl-c-out");
    let report = out.join("rep");
    let set = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample_sessions/vessmire-a");
    let mut child = Command::new(env!("CARGO_BIN_EXE_tellturn"))
        .args([
            "report",
            set.to_str().unwrap(),
            "--out",
            report.to_str().unwrap(),
            "-q",
        ])
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    std::thread::sleep(std::time::Duration::from_millis(1500));
    // The shell's own `kill` is always there.
    let _ = Command::new("sh")
        .args(["-c", &format!("kill -INT {}", child.id())])
        .status();
    let started = std::time::Instant::now();
    let status = child.wait().unwrap();
    // A liveness bound, not a speed claim: the engine checks the cancel flag every tree.
    assert!(started.elapsed() < std::time::Duration::from_secs(10));
    assert!(
        !status.success(),
        "a cancelled report must not report success"
    );
    let leftovers: Vec<_> = std::fs::read_dir(&out)
        .unwrap()
        .flat_map(|e| {
            let p = e.unwrap().path();
            if p.is_dir() {
                std::fs::read_dir(p)
                    .unwrap()
                    .map(|e| e.unwrap().path())
                    .collect::<Vec<_>>()
            } else {
                vec![p]
            }
        })
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn a_report_cancelled_while_its_files_are_written_leaves_none_of_them() {
    use tellturn::progress::{Cancel, NoProgress, Progress};
    use tellturn::study::{StudyOptions, run_study};
    // Cancels as soon as the first file has been written out (the second "writing report").
    struct CancelAfterFirstFile(Cancel);
    impl Progress for CancelAfterFirstFile {
        fn report(&self, stage: &str, fraction: f64) {
            if stage == "writing report" && fraction > 0.0 {
                self.0.cancel();
            }
        }
    }
    let repo = Path::new(env!("CARGO_MANIFEST_DIR"));
    let set = tellturn::sessions::load_set(&repo.join("sample_sessions/vessmire-weekend"));
    let options = StudyOptions {
        bootstrap: 50,
        ..StudyOptions::default()
    };
    let study = run_study(vec![set], vec![], &options, &NoProgress, &Cancel::new()).unwrap();
    let root = scratch("cancel-writing");
    // A new folder: removed again. An existing folder with an earlier report: left as it was.
    let fresh = root.join("fresh");
    let cancel = Cancel::new();
    let r = tellturn::report::write_report(
        &study,
        &fresh,
        &CancelAfterFirstFile(cancel.clone()),
        &cancel,
    );
    assert!(r.is_err());
    assert!(!fresh.exists(), "the new folder stays behind");
    let earlier = root.join("earlier");
    tellturn::report::write_report(&study, &earlier, &NoProgress, &Cancel::new()).unwrap();
    let before = stamp(&earlier);
    let cancel = Cancel::new();
    let r = tellturn::report::write_report(
        &study,
        &earlier,
        &CancelAfterFirstFile(cancel.clone()),
        &cancel,
    );
    assert!(r.is_err());
    assert_eq!(stamp(&earlier), before, "an earlier report was changed");
    let _ = std::fs::remove_dir_all(&root);
}
