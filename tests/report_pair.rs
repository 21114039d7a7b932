//! The report pair (workbook and results JSON) under faults: a report never
//! replaces the input or the job file however the path reaches it, the
//! folder holds one run's pair whatever point a run is stopped or fails at,
//! the next run repairs what an interrupted one left and says so, two runs
//! of one report take turns, and `compare_with` refuses a pair from two
//! runs. The random-kill trial at the end runs `SHEETFIT_KILL_TRIALS` kills
//! (12 by default; the README's figures come from a run with 120).

mod common;

use std::collections::BTreeSet;
use std::path::Path;
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use serde_json::Value;

use common::{read_json, sheetfit, stderr, Cell, Scratch};
use Cell::{N, S, T};

/// The fault points of `report::pair`, in the order a run reaches them.
const FAULT_POINTS: [&str; 5] = [
    "staged",
    "journal",
    "first-rename",
    "second-rename",
    "committed",
];

fn rows(n: usize) -> Vec<Vec<Cell>> {
    let mut rows = vec![vec![T("month"), T("x"), T("y")]];
    for i in 0..n {
        let t = i as f64;
        let x = 10.0 + (0.7 * t).sin() * 3.0 + (i % 4) as f64;
        let noise = ((t * 12.9898).sin() * 43_758.545_3).fract() - 0.5;
        rows.push(vec![
            S(format!("{}-{:02}", 2023 + i / 12, i % 12 + 1)),
            N(x),
            N(5.0 + 2.0 * x + 0.2 * t + noise),
        ]);
    }
    rows
}

fn job(title: &str, output: &str, extra: &str) -> String {
    format!(
        "title = \"{title}\"\n{extra}\n[input]\nworkbook = \"data.xlsx\"\n\n\
         [output]\nworkbook = \"{output}\"\n\n\
         [[model]]\nname = \"m\"\nresponse = \"y\"\nnumeric = [\"x\"]\ntrend = \"month\"\n"
    )
}

fn run_with(cwd: &Path, args: &[&str], env: &[(&str, &str)]) -> Output {
    let mut command = Command::new(env!("CARGO_BIN_EXE_sheetfit"));
    command.args(args).current_dir(cwd);
    for (k, v) in env {
        command.env(k, v);
    }
    command.output().expect("run sheetfit")
}

fn bytes(path: &Path) -> Vec<u8> {
    std::fs::read(path).unwrap_or_else(|e| panic!("read {}: {e}", path.display()))
}

/// The run id a report workbook carries in its document properties.
fn workbook_run_id(path: &Path) -> String {
    let file = std::fs::File::open(path).expect("open the workbook");
    let mut zip = zip::ZipArchive::new(file).expect("the workbook is a whole zip file");
    let mut xml = String::new();
    std::io::Read::read_to_string(
        &mut zip
            .by_name("docProps/custom.xml")
            .expect("custom properties"),
        &mut xml,
    )
    .expect("read custom properties");
    let after = &xml[xml
        .find("name=\"sheetfit_run_id\"")
        .expect("the run id property")..];
    let value = &after[after.find("<vt:lpwstr>").expect("a text value") + 11..];
    value[..value.find('<').expect("end of value")].to_string()
}

/// The run ids of the pair in `folder` (workbook, JSON), each read whole.
fn pair_ids(folder: &Path) -> (String, String) {
    let json: Value = serde_json::from_slice(&bytes(&folder.join("report.json")))
        .expect("the results JSON is whole");
    (
        workbook_run_id(&folder.join("report.xlsx")),
        json["run"]["run_id"]
            .as_str()
            .expect("run.run_id")
            .to_string(),
    )
}

/// Names in `folder` other than the report and its JSON.
fn hidden_files(folder: &Path) -> BTreeSet<String> {
    std::fs::read_dir(folder)
        .map(|entries| {
            entries
                .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
                .filter(|n| n != "report.xlsx" && n != "report.json")
                .collect()
        })
        .unwrap_or_default()
}

/// The hidden files a run of `out/report.xlsx` may leave when it is killed.
fn allowed_leftovers() -> BTreeSet<String> {
    [
        ".report.xlsx.sheetfit-lock",
        ".report.xlsx.sheetfit-swap",
        ".report.xlsx.sheetfit-new",
        ".report.json.sheetfit-new",
        ".report.xlsx.sheetfit-old",
        ".report.json.sheetfit-old",
    ]
    .map(String::from)
    .into()
}

// ---------------------------------------------------------------------------
// The input and the job file are never written over
// ---------------------------------------------------------------------------

fn assert_input_refused(s: &Scratch, output: &str) {
    let cwd = s.path("");
    let input = s.path("data.xlsx");
    let original = bytes(&input);
    s.write("job.toml", &job("Onto input", output, ""));
    let files = s.files();
    for flags in [&[][..], &["--overwrite"][..]] {
        let mut args = vec!["run"];
        args.extend(flags);
        args.push("job.toml");
        let out = sheetfit(&cwd, &args);
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(1), "{output} {args:?}:\n{err}");
        assert!(
            err.contains("is the input workbook or the job file itself"),
            "{output} {args:?}:\n{err}"
        );
        assert_eq!(bytes(&input), original, "{output} {args:?}: input changed");
        assert_eq!(s.files(), files, "{output} {args:?}: something was written");
    }
}

#[test]
fn input_reached_through_a_folder_that_does_not_exist_is_refused() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("months", rows(24))]);
    assert_input_refused(&s, "nosuch/../data.xlsx");
    assert_input_refused(&s, "a/b/../../data.xlsx");
    assert!(
        !s.path("nosuch").exists(),
        "no folder is made for a refusal"
    );
}

#[cfg(unix)]
#[test]
fn input_reached_through_a_symbolic_or_a_hard_link_is_refused() {
    let s = Scratch::new();
    s.workbook("data.xlsx", &[("months", rows(24))]);
    std::fs::create_dir(s.path("real")).unwrap();
    std::os::unix::fs::symlink(s.path(""), s.path("real/up")).unwrap();
    assert_input_refused(&s, "real/up/data.xlsx");
    assert_input_refused(&s, "real/up/nosuch/../data.xlsx");
    std::fs::hard_link(s.path("data.xlsx"), s.path("same.xlsx")).unwrap();
    assert_input_refused(&s, "same.xlsx");
}

/// A bind mount of the input's folder: another path, the same file. Needs
/// the right to mount (root in CI); elsewhere the test says it skipped.
#[cfg(target_os = "linux")]
#[test]
fn input_reached_through_a_second_mount_is_refused() {
    struct Unmount(std::path::PathBuf);
    impl Drop for Unmount {
        fn drop(&mut self) {
            let _ = Command::new("umount").arg(&self.0).status();
        }
    }
    let s = Scratch::new();
    std::fs::create_dir(s.path("share")).unwrap();
    std::fs::create_dir(s.path("again")).unwrap();
    s.workbook("share/data.xlsx", &[("months", rows(24))]);
    let mounted = Command::new("mount")
        .args(["--bind"])
        .arg(s.path("share"))
        .arg(s.path("again"))
        .stderr(Stdio::null())
        .status()
        .is_ok_and(|st| st.success());
    if !mounted {
        eprintln!("skipped: this user may not bind-mount a folder (needs root)");
        return;
    }
    let _unmount = Unmount(s.path("again"));
    let original = bytes(&s.path("share/data.xlsx"));
    s.write(
        "share/job.toml",
        &job("Onto input", "../again/data.xlsx", ""),
    );
    let out = sheetfit(&s.path("share"), &["run", "--overwrite", "job.toml"]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(err.contains("is the input workbook"), "{err}");
    assert_eq!(bytes(&s.path("share/data.xlsx")), original);
}

// ---------------------------------------------------------------------------
// One run's pair at every fault point
// ---------------------------------------------------------------------------

/// A run made to fail (`fail`) or to end at once (`abort`) at each point of
/// the replacement leaves one whole pair, or (killed while renaming) a pair
/// marked by its journal that `compare_with` refuses; the next run repairs
/// it, says so, and leaves the new pair and nothing else.
#[test]
fn a_fault_at_any_point_leaves_one_whole_pair() {
    for point in FAULT_POINTS {
        for mode in ["fail", "abort"] {
            let case = format!("{point}:{mode}");
            let s = Scratch::new();
            let cwd = s.path("");
            let out_dir = s.path("out");
            s.workbook("data.xlsx", &[("months", rows(24))]);
            s.write("job.toml", &job("Old run", "out/report.xlsx", ""));
            let out = sheetfit(&cwd, &["run", "job.toml"]);
            assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
            let (old, old_json) = pair_ids(&out_dir);
            assert_eq!(old, old_json);

            s.write("job.toml", &job("New run", "out/report.xlsx", ""));
            let out = run_with(
                &cwd,
                &["run", "--overwrite", "job.toml"],
                &[("SHEETFIT_TEST_FAULT", &case)],
            );
            let leftovers = hidden_files(&out_dir);
            assert!(
                leftovers.is_subset(&allowed_leftovers()),
                "{case}: {leftovers:?}"
            );
            let ids = pair_ids(&out_dir);
            let journal = leftovers.contains(".report.xlsx.sheetfit-swap");
            match mode {
                "fail" if point == "committed" => {
                    // The pair was in place; only tidying was stopped.
                    assert_eq!(out.status.code(), Some(0), "{case}: {}", stderr(&out));
                    assert_eq!(ids.0, ids.1, "{case}");
                    assert_ne!(ids.0, old, "{case}: the new pair");
                }
                "fail" => {
                    assert_eq!(out.status.code(), Some(1), "{case}: {}", stderr(&out));
                    assert_eq!(ids, (old.clone(), old.clone()), "{case}: the old pair");
                    assert!(leftovers.is_empty(), "{case}: {leftovers:?}");
                }
                _ => {
                    // The job's own process ended at once; the run says so.
                    assert_eq!(out.status.code(), Some(1), "{case}");
                    assert!(
                        stderr(&out).contains("stopped unexpectedly (it aborted"),
                        "{case}: {}",
                        stderr(&out)
                    );
                    if ids.0 != ids.1 {
                        assert!(journal, "{case}: a mixed pair must be marked");
                        s.write(
                            "compare.toml",
                            &job(
                                "Compare",
                                "compare/report.xlsx",
                                "compare_with = \"out/report.json\"",
                            ),
                        );
                        let out = sheetfit(&cwd, &["run", "compare.toml"]);
                        let err = stderr(&out);
                        assert_eq!(out.status.code(), Some(1), "{case}: {err}");
                        assert!(err.contains("come from two different runs"), "{err}");
                    }
                }
            }

            let out = sheetfit(&cwd, &["run", "--overwrite", "job.toml"]);
            let err = stderr(&out);
            assert_eq!(out.status.code(), Some(0), "{case}: {err}");
            if !leftovers.is_empty() {
                assert!(err.contains("sheetfit: note:"), "{case}: says so:\n{err}");
            }
            if journal {
                assert!(err.contains("finished that replacement"), "{case}:\n{err}");
            }
            let (w, j) = pair_ids(&out_dir);
            assert_eq!(w, j, "{case}: one run's pair after the next run");
            assert_eq!(read_json(&out_dir.join("report.json"))["title"], "New run");
            assert!(hidden_files(&out_dir).is_empty(), "{case}");
        }
    }
}

// ---------------------------------------------------------------------------
// One run at a time per report
// ---------------------------------------------------------------------------

#[test]
fn a_report_locked_by_another_run_is_refused_after_a_wait_naming_it() {
    let s = Scratch::new();
    let cwd = s.path("");
    s.workbook("data.xlsx", &[("months", rows(24))]);
    s.write("job.toml", &job("Locked", "out/report.xlsx", ""));
    std::fs::create_dir(s.path("out")).unwrap();
    let lock_path = s.path("out/.report.xlsx.sheetfit-lock");
    let lock = std::fs::File::create(&lock_path).unwrap();
    lock.try_lock().expect("the test takes the lock");
    std::fs::write(&lock_path, "4242").unwrap();
    let out = sheetfit(&cwd, &["run", "job.toml"]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(
        err.contains("another sheetfit run (process 4242) is writing out/report.xlsx; waited 10 s"),
        "{err}"
    );
    assert!(!s.path("out/report.xlsx").exists() && !s.path("out/report.json").exists());
}

#[test]
fn two_runs_at_once_write_one_pair_and_the_second_finds_it() {
    let s = Scratch::new();
    let cwd = s.path("");
    s.workbook("data.xlsx", &[("months", rows(200))]);
    s.write("job.toml", &job("At once", "out/report.xlsx", ""));
    let start = || {
        Command::new(env!("CARGO_BIN_EXE_sheetfit"))
            .args(["run", "job.toml"])
            .current_dir(&cwd)
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .expect("start sheetfit")
    };
    let (a, b) = (start(), start());
    let outs = [a.wait_with_output().unwrap(), b.wait_with_output().unwrap()];
    let mut codes: Vec<_> = outs.iter().map(|o| o.status.code()).collect();
    codes.sort();
    assert_eq!(
        codes,
        [Some(0), Some(1)],
        "one writes, the other is refused"
    );
    let refused = outs.iter().find(|o| o.status.code() == Some(1)).unwrap();
    assert!(stderr(refused).contains("exists; run with --overwrite"));
    let (w, j) = pair_ids(&s.path("out"));
    assert_eq!(w, j);
    assert!(hidden_files(&s.path("out")).is_empty());
}

// ---------------------------------------------------------------------------
// Random kills
// ---------------------------------------------------------------------------

/// SplitMix64, for a repeatable schedule of kill times.
fn splitmix(state: &mut u64) -> f64 {
    *state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
}

/// A job large enough that kills land inside it.
fn big_rows() -> Vec<Vec<Cell>> {
    rows(4_000)
}

/// What became of a run started by [`run_and_kill`].
struct Killed {
    /// The run was still going when killed.
    running: bool,
    /// When its staged workbook first appeared, after the start.
    staged_at: Option<Duration>,
}

/// Starts a run and kills it at `at` after the start, or at `at` after its
/// staged workbook appears when `after_staging`.
fn run_and_kill(cwd: &Path, at: Duration, after_staging: bool, limit: Duration) -> Killed {
    let staged = cwd.join("out/.report.xlsx.sheetfit-new");
    let mut child = Command::new(env!("CARGO_BIN_EXE_sheetfit"))
        .args(["run", "--overwrite", "job.toml"])
        .current_dir(cwd)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start sheetfit");
    let started = Instant::now();
    let mut staged_at: Option<Duration> = None;
    loop {
        let now = Instant::now();
        if staged_at.is_none() && staged.exists() {
            staged_at = Some(now - started);
        }
        let origin = if after_staging {
            staged_at
        } else {
            Some(Duration::ZERO)
        };
        if origin.is_some_and(|o| now - started >= o + at) || child.try_wait().unwrap().is_some() {
            break;
        }
        assert!(started.elapsed() < limit, "the run took over {limit:?}");
        std::thread::sleep(Duration::from_micros(200));
    }
    let running = child.try_wait().unwrap().is_none();
    if running {
        child.kill().expect("kill sheetfit");
    }
    let status = child.wait().unwrap();
    if !running {
        assert!(status.success(), "a run left alone must succeed: {status}");
    }
    Killed { running, staged_at }
}

/// Kills at random moments (half over the whole run, half inside the
/// writing of the pair): after each, the folder holds one run's whole pair
/// or a pair marked by its journal, and nothing but the known hidden
/// files; the next run then repairs it and leaves one whole pair and
/// nothing else.
#[test]
fn random_kills_never_leave_a_mixed_pair_or_stale_files_after_the_next_run() {
    let trials: usize = std::env::var("SHEETFIT_KILL_TRIALS")
        .ok()
        .and_then(|t| t.parse().ok())
        .unwrap_or(12);
    let s = Scratch::new();
    let cwd = s.path("");
    let out_dir = s.path("out");
    s.workbook("data.xlsx", &[("months", big_rows())]);
    s.write("job.toml", &job("Run 0", "out/report.xlsx", ""));

    // Calibration: how long a whole run takes, and when its staging starts.
    let started = Instant::now();
    let calibration = run_and_kill(&cwd, Duration::from_secs(3600), false, Duration::MAX);
    let whole = started.elapsed();
    assert!(!calibration.running, "the calibration run finishes");
    let staging_at = calibration
        .staged_at
        .expect("the calibration run stages its pair");
    let writing = whole
        .saturating_sub(staging_at)
        .max(Duration::from_millis(20));

    let mut seed = 0x5eed_u64;
    let (mut landed, mut while_writing, mut repaired) = (0, 0, 0);
    let mut states = [0usize; 3]; // old pair, new pair, marked half pair
    for k in 1..=trials {
        let before = pair_ids(&out_dir).0;
        let title = format!("Run {k}");
        s.write("job.toml", &job(&title, "out/report.xlsx", ""));
        let after_staging = k % 2 == 0;
        let span = if after_staging {
            writing
        } else {
            whole.mul_f64(1.1)
        };
        let at = span.mul_f64(splitmix(&mut seed));
        let killed = run_and_kill(&cwd, at, after_staging, whole * 20);
        landed += usize::from(killed.running);
        while_writing += usize::from(killed.running && killed.staged_at.is_some());

        let leftovers = hidden_files(&out_dir);
        assert!(
            leftovers.is_subset(&allowed_leftovers()),
            "trial {k}: {leftovers:?}"
        );
        let (w, j) = pair_ids(&out_dir);
        let marked = leftovers.contains(".report.xlsx.sheetfit-swap");
        if w == j {
            states[usize::from(w != before)] += 1;
        } else {
            assert!(marked, "trial {k}: a mixed pair without its journal");
            states[2] += 1;
        }

        let out = sheetfit(&cwd, &["run", "--overwrite", "job.toml"]);
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(0), "trial {k}: {err}");
        repaired += usize::from(err.contains("sheetfit: note:"));
        let (w, j) = pair_ids(&out_dir);
        assert_eq!(w, j, "trial {k}: one run's pair after the next run");
        assert_eq!(read_json(&out_dir.join("report.json"))["title"], title);
        assert!(hidden_files(&out_dir).is_empty(), "trial {k}");
    }
    eprintln!(
        "{trials} trials: a whole run took {whole:?} (writing {writing:?}); {landed} kills \
         landed inside a run, {while_writing} while the pair was being written; after the \
         kill the folder held the old pair {} times, the new pair {} times, a marked half \
         pair {} times; the next run repaired leftovers {repaired} times and always left \
         one whole pair and no other file",
        states[0], states[1], states[2]
    );
    assert!(
        landed >= trials / 3,
        "only {landed} of {trials} kills landed"
    );
}
