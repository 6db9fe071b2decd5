//! The `flowrise` command line on the real binary: exit codes, the JSON
//! schema of `solve --json` on every demo project.

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)] // reason: test code

use std::path::PathBuf;

fn repo_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).parent().unwrap().to_path_buf()
}

fn demo_paths() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(repo_root().join("demo-projects"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "ron"))
        .collect();
    v.sort();
    v
}

/// The real binary, built by cargo for this test.
fn flowrise() -> std::process::Command {
    let mut c = std::process::Command::new(env!("CARGO_BIN_EXE_flowrise"));
    c.current_dir(repo_root());
    c
}

#[test]
fn cli_solve_json_matches_the_documented_schema_on_every_demo() {
    let schema_doc = std::fs::read_to_string(repo_root().join("docs/solve-json.md")).unwrap();
    for path in demo_paths() {
        let out = flowrise().args(["solve", "--json"]).arg(&path).output().unwrap();
        assert!(out.status.success(), "{}: {}", path.display(), String::from_utf8_lossy(&out.stderr));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let check = |obj: &serde_json::Value, section: &str, keys: &[&str]| {
            for k in keys {
                assert!(obj.get(k).is_some(), "{}: {section}.{k} missing", path.display());
                assert!(schema_doc.contains(&format!("`{k}`")), "docs/solve-json.md does not document {section}.{k}");
            }
        };
        check(
            &v["totals"],
            "totals",
            &[
                "heat_load_w",
                "flow_l_h",
                "pump_head_kpa",
                "index_emitter",
                "water_volume_l",
                "expansion_vessel_l",
                "iterations",
                "solve_ms",
                "derive_ms",
                "design_ms",
                "operate_ms",
                "operate_iterations",
            ],
        );
        let e = &v["emitters"][0];
        check(
            e,
            "emitters[]",
            &[
                "id",
                "name",
                "level",
                "load_w",
                "room_c",
                "flow_l_h",
                "supply_c",
                "return_c",
                "circuit_dp_kpa",
                "valve_dp_kpa",
                "presetting",
                "authority",
                "output_w",
            ],
        );
        let p = &v["pipes"][0];
        check(
            p,
            "pipes[]",
            &[
                "run",
                "side",
                "length_m",
                "series",
                "size",
                "inner_mm",
                "flow_l_h",
                "velocity_m_s",
                "velocity_limit_m_s",
                "gradient_pa_m",
                "dp_kpa",
            ],
        );
        assert!(v["warnings"].is_array());
        assert!(v["totals"]["pump_head_kpa"].as_f64().unwrap() > 0.0);
        assert!(v["totals"]["index_emitter"].as_str().unwrap().starts_with('N'));
        let n_emitters = v["emitters"].as_array().unwrap().len();
        let p = flowrise_core::project::Project::load(&path).unwrap();
        assert_eq!(n_emitters, p.emitters().len());
    }
}

#[test]
fn cli_exit_codes() {
    let demo = &demo_paths()[0];
    let out = flowrise().args(["solve"]).arg(demo).output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&out.stdout).contains("local codes"));
    let dir = std::env::temp_dir().join(format!("flowrise-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let bad = dir.join("bad.ron");
    std::fs::write(&bad, "(format: \"flowrise-project\", format_version: 1, name: \"x\"").unwrap();
    let out = flowrise().args(["solve"]).arg(&bad).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("bad.ron"));
    let out = flowrise().args(["solve", "--close", "N99999"]).arg(demo).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    std::fs::remove_dir_all(&dir).ok();
}

/// A temporary folder of this test process.
fn scratch(tag: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("flowrise-cli-{tag}-{}", std::process::id()));
    std::fs::remove_dir_all(&dir).ok();
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Issue 20 item 2: an output option that names the input (directly, by a
/// relative path from another folder, or through a symbolic link) is
/// refused with exit 2 and the project is left as it was, for every
/// subcommand that writes a file.
#[test]
fn cli_refuses_an_output_that_is_the_input() {
    let dir = scratch("same");
    let project = dir.join("p.ron");
    std::fs::copy(&demo_paths()[0], &project).unwrap();
    let before = std::fs::read(&project).unwrap();
    #[cfg(unix)]
    std::os::unix::fs::symlink("p.ron", dir.join("link.ron")).unwrap();
    let mut cases: Vec<Vec<&str>> = vec![
        vec!["parts", "p.ron", "-o", "p.ron"],
        vec!["report", "p.ron", "-o", "./p.ron"],
        vec!["export-network", "p.ron", "-o", "p.ron"],
        vec!["sweep", "p.ron", "--from", "70", "--to", "60", "--csv", "p.ron"],
        vec!["part-load", "p.ron", "--fraction", "0.5", "--csv", "p.ron"],
        vec!["parts", "p.ron", "-o", "sub/../p.ron"],
    ];
    #[cfg(unix)]
    cases.push(vec!["parts", "p.ron", "-o", "link.ron"]);
    std::fs::create_dir_all(dir.join("sub")).unwrap();
    for args in cases {
        let out = flowrise().current_dir(&dir).args(&args).output().unwrap();
        assert_eq!(out.status.code(), Some(2), "{args:?}: {}", String::from_utf8_lossy(&out.stderr));
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains("project file itself"), "{args:?}: {err}");
        assert_eq!(std::fs::read(&project).unwrap(), before, "{args:?} changed the project");
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// `parts -o` and `report -o` write through a symbolic link to the file it
/// points to (the link stays), atomically, like every other writer.
#[cfg(unix)]
#[test]
fn cli_writes_through_a_symlinked_output() {
    let dir = scratch("link");
    std::fs::write(dir.join("parts-real.csv"), "old").unwrap();
    std::os::unix::fs::symlink("parts-real.csv", dir.join("parts.csv")).unwrap();
    let out = flowrise().arg("parts").arg(&demo_paths()[0]).arg("-o").arg(dir.join("parts.csv")).output().unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(std::fs::symlink_metadata(dir.join("parts.csv")).unwrap().file_type().is_symlink());
    assert!(std::fs::read_to_string(dir.join("parts-real.csv")).unwrap().starts_with("category,"));
    std::fs::remove_dir_all(&dir).ok();
}

/// Issue 15: `flowrise commissioning FILE -o schedule.csv` lists every
/// emitter's valve and lockshield with setting, design flow and Δp.
#[test]
fn cli_writes_the_commissioning_schedule() {
    let dir = scratch("commissioning");
    let out = dir.join("schedule.csv");
    let demo = &demo_paths()[1];
    let run = flowrise().arg("commissioning").arg(demo).arg("-o").arg(&out).output().unwrap();
    assert_eq!(run.status.code(), Some(0), "{}", String::from_utf8_lossy(&run.stderr));
    let text = std::fs::read_to_string(&out).unwrap();
    let p = flowrise_core::project::Project::load(demo).unwrap();
    assert_eq!(text.lines().count(), 1 + 2 * p.emitters().len(), "{text}");
    assert!(text.starts_with("level,item,name,device,family,setting,kv_m3_h,design_flow_l_h,dp_kpa"));
    assert!(text.contains(",lockshield,") && text.contains(",valve,"));
    std::fs::remove_dir_all(&dir).ok();
}

/// A small valid project file in `dir` (the first demo), its text and the
/// path.
fn demo_copy(dir: &std::path::Path) -> (String, PathBuf) {
    let text = std::fs::read_to_string(&demo_paths()[0]).unwrap();
    let path = dir.join("p.ron");
    std::fs::write(&path, &text).unwrap();
    (text, path)
}

/// The first entry of `list` in `text` with `id: ID,` — its id and byte
/// range.
fn first_entry(text: &str, list: &str) -> (u32, std::ops::Range<usize>) {
    let start = text.find(&format!("  {list}: [")).unwrap();
    let open = start + text[start..].find("    (").unwrap();
    let close = open + text[open..].find("\n    ),").unwrap();
    let entry = &text[open..close];
    let id_at = entry.find("id: ").unwrap() + 4;
    let id: u32 = entry[id_at..].split(',').next().unwrap().trim().parse().unwrap();
    (id, open..close)
}

/// Issue 20 item 6: a misspelt field is an error naming the field, the
/// item and the nearest known field; a byte-order mark is accepted.
#[test]
fn cli_names_a_misspelt_field_its_item_and_the_nearest_field() {
    let dir = scratch("fields");
    let (text, path) = demo_copy(&dir);
    let (run, r) = first_entry(&text, "runs");
    let entry = text[r.clone()].replacen("length_override_m:", "length_overide_m:", 1);
    std::fs::write(&path, format!("{}{entry}{}", &text[..r.start], &text[r.end..])).unwrap();
    let out = flowrise().arg("solve").arg(&path).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains(&format!("run R{run}")), "{err}");
    assert!(err.contains("unknown field `length_overide_m`"), "{err}");
    assert!(err.contains("did you mean `length_override_m`?"), "{err}");
    assert!(err.contains("p.ron: line "), "{err}");

    let bad = text.replacen("supply_c:", "supply_C:", 1);
    std::fs::write(&path, bad).unwrap();
    let out = flowrise().arg("solve").arg(&path).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("settings: unknown field `supply_C`") && err.contains("did you mean `supply_c`?"), "{err}");

    std::fs::write(&path, format!("\u{feff}{text}")).unwrap();
    let out = flowrise().arg("solve").arg(&path).output().unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    std::fs::remove_dir_all(&dir).ok();
}

/// Issue 20 item 7: a control character in a name never reaches the
/// terminal: the file is refused, naming the item, for every subcommand
/// that prints names.
#[test]
fn cli_refuses_control_characters_in_names() {
    let dir = scratch("control");
    let (text, path) = demo_copy(&dir);
    let (node, r) = first_entry(&text, "nodes");
    for c in ['\u{1b}', '\u{7}', '\0', '\t', '\n'] {
        let entry = &text[r.clone()];
        let name_at = entry.find("name: \"").unwrap() + 7;
        let with = format!("{}{}[31m{}", &entry[..name_at], c.escape_default(), &entry[name_at..]);
        std::fs::write(&path, format!("{}{with}{}", &text[..r.start], &text[r.end..])).unwrap();
        for args in [
            vec!["solve"],
            vec!["sweep", "--from", "60", "--to", "55"],
            vec!["part-load", "--fraction", "0.5"],
            vec!["export-network", "-o", "net.inp"],
        ] {
            let out = flowrise().current_dir(&dir).args(&args[..1]).arg(&path).args(&args[1..]).output().unwrap();
            let err = String::from_utf8_lossy(&out.stderr);
            assert_eq!(out.status.code(), Some(2), "{args:?} {c:?}: {err}");
            assert!(err.contains(&format!("N{node}")) && err.contains("control character"), "{err}");
            let all = [&out.stdout[..], &out.stderr[..]].concat();
            assert!(!all.contains(&0x1b) && !all.contains(&0x07) && !all.contains(&0), "{args:?}: a control byte");
            assert!(!dir.join("net.inp").exists());
        }
    }
    // The project's own name too.
    let bad = text.replacen("  name: \"", "  name: \"\\u{1b}]0;owned\\u{7}", 1);
    std::fs::write(&path, bad).unwrap();
    let out = flowrise().arg("solve").arg(&path).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("project: name") && err.contains("U+001B"), "{err}");
    std::fs::remove_dir_all(&dir).ok();
}

/// Issue 20 item 8: every numeric argument has a range; a value outside
/// is refused at once with a message naming the argument, exit 2.
#[test]
fn cli_refuses_numeric_arguments_out_of_range() {
    let dir = scratch("args");
    let (_, path) = demo_copy(&dir);
    let p = path.to_str().unwrap();
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["sweep", p, "--step", "1e-9"], "sweep step"),
        (vec!["sweep", p, "--step", "0"], "sweep step"),
        (vec!["sweep", p, "--step=-1"], "sweep step -1"),
        (vec!["sweep", p, "--target", "inf"], "supply temperature inf"),
        (vec!["sweep", p, "--target", "nan"], "supply temperature NaN"),
        (vec!["sweep", p, "--from", "500"], "supply temperature 500"),
        (vec!["sweep", p, "--to=-40"], "supply temperature -40"),
        (vec!["sweep", p, "--min-drop", "0"], "minimum water temperature drop 0"),
        (vec!["sweep", p, "--step", "lots"], "is not a number"),
        (vec!["sweep", p, "--from", "60", "--to", "70"], "give from"),
        (vec!["part-load", p, "--fraction", "1.5"], "share of valves closed 1.5"),
        (vec!["part-load", p, "--fraction", "inf"], "share of valves closed"),
        (vec!["part-load", p, "--seed=-1"], "--seed"),
        (vec!["part-load", p, "--seed", "1e3"], "--seed"),
        (vec!["generate", "--floors", "0", "--per-floor", "3", "-o", "g.ron"], "number of floors 0 — give 1 to 200"),
        (vec!["generate", "--floors", "201", "--per-floor", "3", "-o", "g.ron"], "--floors"),
        (vec!["generate", "--floors", "2", "--per-floor", "100001", "-o", "g.ron"], "emitters per floor 100001"),
        (vec!["generate", "--floors", "200", "--per-floor", "100000", "-o", "g.ron"], "number of emitters"),
        (vec!["export-network", p, "-o", "n.inp", "--accuracy", "0"], "export accuracy 0"),
        (vec!["export-network", p, "-o", "n.inp", "--accuracy", "inf"], "export accuracy"),
        (vec!["bench-solve", p, "--repeat", "0"], "repetitions 0"),
        (vec!["bench-solve", p, "--repeat", "1000000"], "repetitions"),
        (vec!["bench-solve", p, "--flow-tolerance", "0"], "solver flow tolerance 0"),
    ];
    for (args, expect) in cases {
        let t = std::time::Instant::now();
        let out = flowrise().current_dir(&dir).args(&args).output().unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(expect), "{args:?}: expected \"{expect}\" in {err}");
        assert!(t.elapsed().as_secs() < 20, "{args:?} took {:?}", t.elapsed());
        assert!(!dir.join("g.ron").exists() && !dir.join("n.inp").exists(), "{args:?} wrote a file");
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// Issue 20 item 10: an output that cannot be written exits 2 with a
/// message, from every subcommand that writes a file.
#[test]
fn cli_unwritable_output_exits_2() {
    let dir = scratch("unwritable");
    let (_, path) = demo_copy(&dir);
    let p = path.to_str().unwrap();
    let missing = dir.join("no-such-folder").join("out.file");
    let o = missing.to_str().unwrap();
    let cases: Vec<Vec<&str>> = vec![
        vec!["parts", p, "-o", o],
        vec!["report", p, "-o", o],
        vec!["commissioning", p, "-o", o],
        vec!["export-network", p, "-o", o],
        vec!["export-network", p, "-o", "ok.inp", "--flows-json", o],
        vec!["generate", "--floors", "1", "--per-floor", "3", "-o", o],
        vec!["sweep", p, "--from", "60", "--to", "58", "--csv", o],
        vec!["part-load", p, "--fraction", "0.5", "--csv", o],
    ];
    for args in cases {
        let out = flowrise().current_dir(&dir).args(&args).output().unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains("cannot write") && err.contains("no-such-folder"), "{args:?}: {err}");
    }
    std::fs::remove_dir_all(&dir).ok();
}

/// Issue 20 item 10: an expansion vessel that cannot be sized is `null`
/// in `solve --json`, with the finding that says why.
#[test]
fn cli_unsized_vessel_is_null() {
    let dir = scratch("vessel");
    let (text, path) = demo_copy(&dir);
    let at = text.find("static_height_m: None").expect("the demo leaves the static height to the levels");
    std::fs::write(&path, format!("{}static_height_m: Some(60.0){}", &text[..at], &text[at + 21..])).unwrap();
    let out = flowrise().args(["solve", "--json"]).arg(&path).output().unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["totals"]["expansion_vessel_l"].is_null(), "{}", v["totals"]);
    let kinds: Vec<&str> = v["warnings"].as_array().unwrap().iter().filter_map(|f| f["kind"].as_str()).collect();
    assert!(kinds.contains(&"vessel_not_sized"), "{kinds:?}");
    std::fs::remove_dir_all(&dir).ok();
}

fn on_path(program: &str) -> bool {
    std::env::var_os("PATH").is_some_and(|p| std::env::split_paths(&p).any(|d| d.join(program).is_file()))
}

/// A private X server for one test. `Xvfb -displayfd` picks a free display
/// number itself and writes it once the server accepts connections, so two
/// servers started at once cannot race for one number and no client connects
/// before the server is up (`xvfb-run -a` guesses the number from lock files
/// and a CI run once found no server behind it).
struct VirtualDisplay {
    child: std::process::Child,
    display: String,
}

impl VirtualDisplay {
    fn start(dir: &std::path::Path) -> Result<Self, String> {
        use std::io::BufRead;
        let log = dir.join("xvfb.log");
        let stderr = std::fs::File::create(&log).map_err(|e| format!("{}: {e}", log.display()))?;
        let mut child = std::process::Command::new("Xvfb")
            .args(["-displayfd", "1", "-screen", "0", "1280x800x24", "-nolisten", "tcp"])
            .stdout(std::process::Stdio::piped())
            .stderr(stderr)
            .spawn()
            .map_err(|e| format!("Xvfb did not start: {e}"))?;
        let stdout = child.stdout.take().ok_or("Xvfb has no stdout")?;
        let (tx, rx) = std::sync::mpsc::channel();
        std::thread::spawn(move || {
            let mut line = String::new();
            let _ = std::io::BufReader::new(stdout).read_line(&mut line);
            let _ = tx.send(line);
        });
        let number = rx.recv_timeout(std::time::Duration::from_secs(30)).unwrap_or_default();
        let number = number.trim();
        if number.is_empty() || !number.chars().all(|c| c.is_ascii_digit()) {
            let _ = child.kill();
            let _ = child.wait();
            let why = std::fs::read_to_string(&log).unwrap_or_default();
            return Err(format!("Xvfb gave no display number within 30 s: {}", why.trim()));
        }
        Ok(Self { child, display: format!(":{number}") })
    }
}

impl Drop for VirtualDisplay {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// Issue 16: `flowrise FILE` opens FILE. Without a display the file is
/// still read first: a missing or broken file is named with exit 2, a good
/// one reaches the "no display" message. Under Xvfb (when `Xvfb` and
/// `xdotool` are installed) the real window opens with the project's name
/// in its title.
#[test]
fn cli_flowrise_file_opens_the_file() {
    let dir = scratch("open-file");
    let missing = dir.join("missing.ron");
    let out = flowrise().arg(&missing).env_remove("DISPLAY").env_remove("WAYLAND_DISPLAY").output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("missing.ron"), "{}", String::from_utf8_lossy(&out.stderr));
    let broken = dir.join("broken.ron");
    std::fs::write(&broken, "(format: \"flowrise-project\"").unwrap();
    let out = flowrise().arg(&broken).env_remove("DISPLAY").env_remove("WAYLAND_DISPLAY").output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("broken.ron"));
    let demo = repo_root().join("demo-projects/flat-six-radiators.ron");
    let out = flowrise().arg(&demo).env_remove("DISPLAY").env_remove("WAYLAND_DISPLAY").output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("no display found"), "the file loaded, then no display");

    if !(on_path("Xvfb") && on_path("xdotool")) {
        eprintln!("notice: Xvfb or xdotool missing; the real window is not opened");
        std::fs::remove_dir_all(&dir).ok();
        return;
    }
    let name = flowrise_core::project::Project::load(&demo).unwrap().name;
    let xvfb = match VirtualDisplay::start(&dir) {
        Ok(x) => x,
        Err(why) => {
            eprintln!("notice: no virtual display ({why}); the real window is not opened");
            std::fs::remove_dir_all(&dir).ok();
            return;
        }
    };
    let script = format!(
        "'{bin}' '{file}' & pid=$!; found=1; for i in $(seq 1 120); do \
         if xdotool search --name 'flat-six-radiators.ron' >/dev/null 2>&1; then \
         xdotool getwindowname $(xdotool search --name 'flat-six-radiators.ron' | head -n1); found=0; break; fi; \
         sleep 0.5; done; kill $pid; wait $pid 2>/dev/null; exit $found",
        bin = env!("CARGO_BIN_EXE_flowrise"),
        file = demo.display()
    );
    let out = std::process::Command::new("bash")
        .args(["-c", &script])
        .env("DISPLAY", &xvfb.display)
        .env_remove("WAYLAND_DISPLAY")
        .env_remove("XAUTHORITY")
        .env("XDG_CONFIG_HOME", &dir)
        .env("XDG_DATA_HOME", &dir)
        .env("FLOWRISE_RECOVERY_DIR", dir.join("recovery"))
        .output()
        .unwrap();
    drop(xvfb);
    let title = String::from_utf8_lossy(&out.stdout);
    eprintln!("window title under Xvfb: {}", title.trim());
    assert!(out.status.success(), "no window titled with the file: {title} {}", String::from_utf8_lossy(&out.stderr));
    assert!(title.contains(&name), "the title names the project: {title}");
    std::fs::remove_dir_all(&dir).ok();
}
