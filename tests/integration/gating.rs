//! Release gating: `check --shard` and `merge`, `compare`, and approved-answer regression,
//! run through the real binary.
//!
//! * Merging the N shards of a run gives the unsharded run's findings byte for byte,
//!   apart from the run record (`generated_at`, `command`, `merged_from`), for several N;
//!   parts that do not belong together are refused by name.
//! * `compare` on crafted pairs of runs: every kind of change (lower and higher support,
//!   added and resolved findings of each severity, dead and forbidden citations, new and
//!   gone answers, rejected lines, accepted findings, approved-answer agreement), equal
//!   runs, the tolerance, `--strict`, bad input files, and hostile text kept inert in its
//!   HTML page.
//! * `[regression]` thresholds: findings, summary counts, the gate and waivers.
//!
//! Expected values come from SPEC.md and the definitions; scores are never
//! asserted, only verdicts of clear-cut sentences (verbatim copies of the cited text, or
//! sentences with no word in common with it).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use plumbline::findings::Report;
use scraper::{Html, Selector};
use serde_json::{Value, json};

const BIN: &str = env!("CARGO_BIN_EXE_plumbline");

fn project(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(rel)
}

fn run(args: &[&dyn AsRef<std::ffi::OsStr>]) -> Output {
    let mut cmd = Command::new(BIN);
    for a in args {
        cmd.arg(a);
    }
    cmd.output().expect("run plumbline")
}

fn code(o: &Output) -> i32 {
    o.status.code().unwrap_or(-1)
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn read_json(p: &Path) -> Value {
    let t = std::fs::read_to_string(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
    serde_json::from_str(&t).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

// ---------------------------------------------------------------------------------------
// Shards and merge

/// `check` on the demo scenario (principals, reviewer decisions with stale ones, rejected
/// lines, approved answers, a skipped store entry), with `extra` arguments.
fn demo_check(json_out: &Path, extra: &[&str]) -> Output {
    let d = project("demo");
    let mut cmd = Command::new(BIN);
    cmd.arg("check")
        .arg("--quiet")
        .arg("--store")
        .arg(d.join("store"))
        .arg("--answers")
        .arg(d.join("answers.jsonl"))
        .arg("--principals")
        .arg(d.join("principals.json"))
        .arg("--accept")
        .arg(d.join("decisions.jsonl"))
        .arg("--json")
        .arg(json_out)
        .args(extra);
    cmd.output().expect("run plumbline")
}

/// The findings file of a merged run with its run record replaced by the single run's,
/// serialised as plumbline serialises findings.
fn with_run_record_of(merged: &Path, single: &Report) -> Vec<u8> {
    let bytes = std::fs::read(merged).unwrap();
    let mut m: Report = serde_json::from_slice(&bytes).expect("merged findings as a Report");
    // The file is exactly what plumbline writes for this value: nothing was lost in
    // reading it back.
    assert_eq!(plumbline::report::json::to_bytes(&m).unwrap(), bytes, "round trip");
    assert!(!m.merged_from.is_empty() && m.shard.is_none());
    m.generated_at = single.generated_at.clone();
    m.command = single.command.clone();
    m.merged_from = Vec::new();
    plumbline::report::json::to_bytes(&m).unwrap()
}

#[test]
fn merged_shards_equal_the_single_run_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let single_path = dir.path().join("single.json");
    let single_out = demo_check(&single_path, &[]);
    let single_bytes = std::fs::read(&single_path).unwrap();
    let single: Report = serde_json::from_slice(&single_bytes).unwrap();
    assert!(single.shard.is_none() && single.merged_from.is_empty());
    assert!(!single.rejected.is_empty() && !single.decisions.stale.is_empty());
    assert!(single.decisions.applied > 0 && single.summary.approved.is_some());

    // N = 1 up to more shards than some shards have answers (empty shards).
    for n in [1u64, 2, 3, 5, 40] {
        let mut parts = Vec::new();
        let mut answers = 0;
        for k in 1..=n {
            let p = dir.path().join(format!("part-{k}-of-{n}.json"));
            let o = demo_check(&p, &["--shard", &format!("{k}/{n}")]);
            assert!(matches!(code(&o), 0 | 1), "{}", stderr(&o));
            let r = read_json(&p);
            assert_eq!(r["shard"], json!({"k": k, "n": n, "hash": "fnv1a64(id) mod n"}));
            answers += r["answers"].as_array().unwrap().len();
            if k > 1 {
                assert!(
                    r["rejected"].as_array().unwrap().is_empty(),
                    "only shard 1 reports rejected lines"
                );
            }
            parts.push(p);
        }
        assert_eq!(answers, single.answers.len(), "N = {n}: every answer in exactly one shard");
        // Shards in reverse order: the order of the parts does not matter.
        parts.reverse();
        let merged = dir.path().join(format!("merged-{n}.json"));
        let html = dir.path().join(format!("merged-{n}.html"));
        let mut args: Vec<&dyn AsRef<std::ffi::OsStr>> = vec![&"merge", &"--quiet"];
        for p in &parts {
            args.push(p);
        }
        args.extend([&"--json" as &dyn AsRef<std::ffi::OsStr>, &merged, &"--html", &html]);
        let o = run(&args);
        assert_eq!(
            code(&o),
            code(&single_out),
            "N = {n}: the gate decided on the whole: {}",
            stderr(&o)
        );
        let rebuilt = with_run_record_of(&merged, &single);
        assert!(
            rebuilt == single_bytes,
            "N = {n}: merged findings differ from the single run beyond the run record"
        );
        let page = std::fs::read_to_string(&html).unwrap();
        assert!(
            page.contains("Merged from") && page.contains(&format!("{n} shard findings files"))
        );
    }
}

#[test]
fn merge_refuses_parts_that_do_not_belong_together() {
    let dir = tempfile::tempdir().unwrap();
    let p = |name: &str| dir.path().join(name);
    for k in 1..=3 {
        demo_check(&p(&format!("s{k}.json")), &["--shard", &format!("{k}/3")]);
    }
    let merge = |parts: &[&str]| {
        let mut cmd = Command::new(BIN);
        cmd.arg("merge").arg("--quiet");
        for name in parts {
            cmd.arg(p(name));
        }
        cmd.arg("--json").arg(p("out.json"));
        cmd.output().unwrap()
    };
    let expect = |o: Output, needles: &[&str]| {
        assert_eq!(code(&o), 2, "{}", stderr(&o));
        let e = stderr(&o);
        for n in needles {
            assert!(e.contains(n), "{n:?} not in {e:?}");
        }
    };
    expect(merge(&["s1.json", "s3.json"]), &["shard 2 of 3 missing"]);
    expect(merge(&["s1.json", "s2.json", "s2.json", "s3.json"]), &["both hold shard 2 of 3"]);

    // Another config: the settings differ, and the field is named.
    std::fs::write(p("other.toml"), "[gate]\nmax_unsupported = 3\n").unwrap();
    demo_check(
        &p("s2-other.json"),
        &["--shard", "2/3", "--config", p("other.toml").to_str().unwrap()],
    );
    expect(
        merge(&["s1.json", "s2-other.json", "s3.json"]),
        &["s2-other.json", "config.gate.max_unsupported"],
    );

    // Another answers file.
    let mut log = std::fs::read_to_string(project("demo/answers.jsonl")).unwrap();
    log.push_str("\n{\"id\": \"extra\", \"answer\": \"Hello.\", \"citations\": []}\n");
    std::fs::write(p("answers2.jsonl"), log).unwrap();
    let d = project("demo");
    let o = Command::new(BIN)
        .args(["check", "--quiet", "--shard", "3/3", "--store"])
        .arg(d.join("store"))
        .arg("--answers")
        .arg(p("answers2.jsonl"))
        .arg("--principals")
        .arg(d.join("principals.json"))
        .arg("--accept")
        .arg(d.join("decisions.jsonl"))
        .arg("--json")
        .arg(p("s3-other.json"))
        .output()
        .unwrap();
    assert!(matches!(code(&o), 0 | 1));
    expect(
        merge(&["s1.json", "s2.json", "s3-other.json"]),
        &["s3-other.json", "inputs.answers.sha256"],
    );

    // A shard N of another run, a file that is not findings, a missing file, a field of
    // the wrong type, a newer format.
    demo_check(&p("t1.json"), &["--shard", "1/2"]);
    expect(merge(&["s1.json", "t1.json", "s3.json"]), &["part of 2 shards"]);
    std::fs::write(p("junk.json"), "{\"hello\": 1}").unwrap();
    expect(merge(&["s1.json", "junk.json"]), &["junk.json", "not a plumbline findings document"]);
    expect(merge(&["s1.json", "nowhere.json"]), &["cannot read", "nowhere.json"]);
    let mut v = read_json(&p("s2.json"));
    v["summary"]["lines_read"] = json!("many");
    std::fs::write(p("typed.json"), v.to_string()).unwrap();
    expect(merge(&["s1.json", "typed.json", "s3.json"]), &["typed.json", "summary.lines_read"]);
    let mut v = read_json(&p("s2.json"));
    v["tool"]["version"] = json!("99.0.0");
    std::fs::write(p("newer.json"), v.to_string()).unwrap();
    expect(merge(&["s1.json", "newer.json", "s3.json"]), &["newer.json", "tool.version", "99.0.0"]);
    // A part whose answers are not of its shard (made otherwise, or edited).
    let mut v = read_json(&p("s2.json"));
    v["shard"]["k"] = json!(3);
    std::fs::write(p("relabelled.json"), v.to_string()).unwrap();
    expect(
        merge(&["s1.json", "relabelled.json", "s2.json"]),
        &["relabelled.json", "answers[0].id", "hashes to shard 2 of 3"],
    );
}

// ---------------------------------------------------------------------------------------
// Compare

const WARRANTY: &str = "Warranty claims stay open for 45 days from the date of purchase. After that they close automatically.\n";
const PARKING: &str =
    "Staff parking is free on weekdays. Visitors pay three pounds per hour at the north gate.\n";
const BOARD: &str = "The board approved a bonus pool for the northern depots in March.\n";

/// A store, principals and reviewer decisions shared by both runs of a comparison.
struct Pair {
    dir: tempfile::TempDir,
}

impl Pair {
    fn new() -> Pair {
        let dir = tempfile::tempdir().unwrap();
        let store = dir.path().join("store");
        std::fs::create_dir_all(store.join("finance")).unwrap();
        std::fs::write(store.join("warranty.md"), WARRANTY).unwrap();
        std::fs::write(store.join("parking.txt"), PARKING).unwrap();
        std::fs::write(store.join("finance/board.md"), BOARD).unwrap();
        std::fs::write(
            store.join("manifest.json"),
            json!({"default_access": ["all-staff"], "documents": [
                {"id": "finance/board", "path": "finance/board.md", "access": ["board"]}
            ]})
            .to_string(),
        )
        .unwrap();
        std::fs::write(
            dir.path().join("principals.json"),
            json!({"u-1": ["all-staff"]}).to_string(),
        )
        .unwrap();
        Pair { dir }
    }

    fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    /// Checks `lines` (answers, or raw strings for bad lines) as run `name`; returns the
    /// findings path.
    fn check(&self, name: &str, lines: &[Value], accept: Option<&[Value]>) -> PathBuf {
        let answers = self.path(&format!("{name}.jsonl"));
        let text: String = lines
            .iter()
            .map(|l| match l {
                Value::String(raw) => format!("{raw}\n"),
                v => format!("{v}\n"),
            })
            .collect();
        std::fs::write(&answers, text).unwrap();
        let out = self.path(&format!("{name}.json"));
        let mut cmd = Command::new(BIN);
        cmd.args(["check", "--quiet", "--store"])
            .arg(self.path("store"))
            .arg("--answers")
            .arg(&answers)
            .arg("--principals")
            .arg(self.path("principals.json"))
            .arg("--json")
            .arg(&out);
        if let Some(decisions) = accept {
            let f = self.path(&format!("{name}-decisions.jsonl"));
            let text: String = decisions.iter().map(|d| format!("{d}\n")).collect();
            std::fs::write(&f, text).unwrap();
            cmd.arg("--accept").arg(f);
        }
        let o = cmd.output().unwrap();
        assert!(matches!(code(&o), 0 | 1), "{}", stderr(&o));
        out
    }

    fn compare(&self, base: &Path, new: &Path, extra: &[&str]) -> (Output, Value, String) {
        let (json_out, html_out) = (self.path("cmp.json"), self.path("cmp.html"));
        let _ = std::fs::remove_file(&json_out);
        let o = Command::new(BIN)
            .arg("compare")
            .arg(base)
            .arg(new)
            .arg("--json")
            .arg(&json_out)
            .arg("--html")
            .arg(&html_out)
            .args(extra)
            .output()
            .unwrap();
        let v = if json_out.exists() { read_json(&json_out) } else { Value::Null };
        let html = std::fs::read_to_string(&html_out).unwrap_or_default();
        (o, v, html)
    }
}

fn answer(id: &str, text: &str, doc: &str) -> Value {
    json!({"id": id, "user": "u-1", "answer": text, "citations": [{"ref": "1", "doc": doc}]})
}

/// The comparison's entry for answer `id`.
fn entry<'v>(c: &'v Value, id: &str) -> &'v Value {
    c["answers"]
        .as_array()
        .unwrap()
        .iter()
        .find(|a| a["id"] == id)
        .unwrap_or_else(|| panic!("no change listed for {id}: {c:#}"))
}

fn kinds(list: &Value) -> Vec<String> {
    list.as_array().unwrap().iter().map(|f| f["kind"].as_str().unwrap().to_owned()).collect()
}

const HOSTILE: &str = "Claims with <script>document.title='INJECTED'</script> and <img src=x onerror=alert(1)> stay open forever [1].";

fn base_run(p: &Pair) -> PathBuf {
    p.check(
        "base",
        &[
            answer("same", "Warranty claims stay open for 45 days from the date of purchase [1].", "warranty.md"),
            answer("lower", "After that they close automatically [1].", "warranty.md"),
            answer("dead", "Staff parking is free on weekdays [1].", "parking.txt"),
            answer("forbidden", "Staff parking is free on weekdays [1].", "parking.txt"),
            answer("better", "Penguins juggle umbrellas near volcanoes [1].", "warranty.md"),
            json!({"id": "mixed", "user": "u-1",
                "answer": "Staff parking is free on weekdays [1]. Bananas orbit the lighthouse quietly [1].",
                "citations": [{"ref": "1", "doc": "parking.txt"}]}),
            json!({"id": "approved", "user": "u-1",
                "answer": "Warranty claims stay open for 45 days from the date of purchase [1].",
                "citations": [{"ref": "1", "doc": "warranty.md"}],
                "approved_answer": "Warranty claims stay open for 45 days from the date of purchase."}),
            answer("waived", "After that they close automatically [1].", "warranty.md"),
            answer("gone", "Staff parking is free on weekdays [1].", "parking.txt"),
        ],
        None,
    )
}

fn new_run(p: &Pair) -> PathBuf {
    p.check(
        "new",
        &[
            // Unchanged.
            answer("same", "Warranty claims stay open for 45 days from the date of purchase [1].", "warranty.md"),
            // The same sentence, now citing a passage that does not carry it.
            answer("lower", "After that they close automatically [1].", "parking.txt"),
            // A citation to a document that is not in the store.
            answer("dead", "Staff parking is free on weekdays [1].", "parking-2019.txt"),
            // A citation the user may not read.
            answer("forbidden", "The board approved a bonus pool for the northern depots in March [1].", "finance/board"),
            // An unsupported sentence replaced by a supported one.
            answer("better", "Warranty claims stay open for 45 days from the date of purchase [1].", "warranty.md"),
            // One sentence worse (the cited passage changed), one better (removed).
            json!({"id": "mixed", "user": "u-1",
                "answer": "Staff parking is free on weekdays [1].",
                "citations": [{"ref": "1", "doc": "warranty.md"}]}),
            // Still supported, but much less like the approved answer.
            json!({"id": "approved", "user": "u-1",
                "answer": "After that they close automatically [1].",
                "citations": [{"ref": "1", "doc": "warranty.md"}],
                "approved_answer": "Warranty claims stay open for 45 days from the date of purchase."}),
            // A new unsupported sentence a reviewer accepted.
            answer("waived", "After that they close automatically [1].", "parking.txt"),
            // Only in the new run, with hostile text.
            answer("fresh", HOSTILE, "warranty.md"),
            // One more line that cannot be read.
            Value::String("{\"id\": \"broken\", \"answer\": 7}".into()),
        ],
        Some(&[json!({"answer": "waived", "finding": "unsupported", "by": "rev-1", "note": "checked by hand"})]),
    )
}

#[test]
fn compare_reports_every_kind_of_change() {
    let p = Pair::new();
    let (base, new) = (base_run(&p), new_run(&p));
    let (o, c, html) = p.compare(&base, &new, &[]);
    assert_eq!(code(&o), 1, "new errors make the new run worse: {}", stderr(&o));
    assert_eq!(c["decision"]["worse"], true);

    let s = &c["summary"];
    assert_eq!(s["answers_matched"], 8);
    assert_eq!(s["answers_new"], 1);
    assert_eq!(s["answers_gone"], 1);
    assert_eq!((s["rejected_base"].as_u64(), s["rejected_new"].as_u64()), (Some(0), Some(1)));
    assert_eq!(s["added_by_kind"]["rejected_line"], 1);
    assert!(
        c["answers"].as_array().unwrap().iter().all(|a| a["id"] != "same"),
        "unchanged answers are not listed"
    );
    assert_eq!(s["answers_unchanged"], 1);

    // Lower support on the same sentence: verdict down, an unsupported finding added.
    let lower = entry(&c, "lower");
    assert_eq!(lower["state"], "regressed");
    let sc = &lower["sentences"][0];
    assert_eq!(sc["change"], "lower");
    assert_eq!(
        (sc["base"]["verdict"].as_str(), sc["new"]["verdict"].as_str()),
        (Some("supported"), Some("unsupported"))
    );
    assert!(kinds(&lower["findings_added"]).contains(&"unsupported".to_owned()));
    assert!(lower["counted"].as_u64().unwrap() >= 1);

    // New broken and forbidden citations.
    let dead = entry(&c, "dead");
    assert_eq!(dead["state"], "regressed");
    assert!(kinds(&dead["findings_added"]).contains(&"dead".to_owned()));
    let forbidden = entry(&c, "forbidden");
    assert!(kinds(&forbidden["findings_added"]).contains(&"forbidden".to_owned()));
    let f = forbidden["findings_added"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["kind"] == "forbidden")
        .unwrap();
    assert_eq!(
        (f["severity"].as_str(), f["subject"].as_str(), f["counted"].as_bool()),
        (Some("error"), Some("finance/board"), Some(true))
    );
    assert_eq!(forbidden["base"]["passed"], true);
    assert_eq!(forbidden["new"]["passed"], false);

    // Improved: the unsupported sentence is gone, its findings resolved, the answer passes.
    let better = entry(&c, "better");
    assert_eq!(better["state"], "improved");
    assert!(kinds(&better["findings_resolved"]).contains(&"unsupported".to_owned()));
    assert!(better["findings_added"].as_array().unwrap().is_empty());
    let changes: Vec<&str> = better["sentences"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["change"].as_str().unwrap())
        .collect();
    assert!(changes.contains(&"removed") && changes.contains(&"added"), "{changes:?}");
    assert!(s["failed_to_passed"].as_u64().unwrap() >= 1);

    // Mixed: one thing worse, another better.
    let mixed = entry(&c, "mixed");
    assert_eq!(mixed["state"], "mixed");
    assert!(!mixed["findings_added"].as_array().unwrap().is_empty());
    assert!(!mixed["findings_resolved"].as_array().unwrap().is_empty());

    // Lower agreement with the approved answer, though every sentence is supported.
    let approved = entry(&c, "approved");
    assert_eq!(approved["approved"]["change"], "lower");
    assert!(
        approved["approved"]["new"]["rougeL"].as_f64()
            < approved["approved"]["base"]["rougeL"].as_f64()
    );
    assert_eq!(approved["counted"], 0, "lower agreement counts only with --strict");

    // A new error a reviewer accepted is listed, not counted.
    let waived = entry(&c, "waived");
    let w = waived["findings_added"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["kind"] == "unsupported")
        .unwrap();
    assert_eq!((w["accepted"].as_bool(), w["counted"].as_bool()), (Some(true), Some(false)));

    // New and gone answers.
    let fresh = entry(&c, "fresh");
    assert_eq!(fresh["state"], "new");
    assert!(fresh["base"].is_null() && !fresh["findings_added"].as_array().unwrap().is_empty());
    let gone = entry(&c, "gone");
    assert_eq!(gone["state"], "gone");
    assert!(
        gone["findings_resolved"].as_array().unwrap().is_empty(),
        "a gone answer's findings are not resolved"
    );

    // Order: regressed, mixed, new, improved, gone.
    let order: Vec<&str> =
        c["answers"].as_array().unwrap().iter().map(|a| a["state"].as_str().unwrap()).collect();
    let rank = |s: &str| {
        ["regressed", "mixed", "new", "improved", "gone"].iter().position(|x| *x == s).unwrap()
    };
    assert!(order.windows(2).all(|w| rank(w[0]) <= rank(w[1])), "{order:?}");

    // The counts add up: counted = counted added findings + added rejected lines.
    let counted_findings: u64 = c["answers"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|a| a["findings_added"].as_array().unwrap())
        .filter(|f| f["counted"] == true)
        .count() as u64;
    assert_eq!(c["decision"]["counted"].as_u64().unwrap(), counted_findings + 1);
    let added: u64 =
        s["added_by_kind"].as_object().unwrap().values().map(|v| v.as_u64().unwrap()).sum();
    assert_eq!(added, s["added_errors"].as_u64().unwrap() + s["added_warnings"].as_u64().unwrap());

    // The HTML page: every changed answer, both runs side by side, hostile text inert.
    let page = Html::parse_document(&html);
    let sel = |q: &str| Selector::parse(q).unwrap();
    assert!(page.errors.is_empty(), "{:?}", page.errors);
    assert_eq!(page.select(&sel("article.chg")).count(), c["answers"].as_array().unwrap().len());
    assert_eq!(page.select(&sel("script")).count(), 0, "the page has no script");
    for e in page.select(&sel("*")) {
        for (name, value) in e.value().attrs() {
            assert!(!name.starts_with("on") && name != "style", "<{}> {name}", e.value().name());
            if matches!(name, "href" | "src") {
                assert!(value.starts_with('#'), "{value}");
            }
        }
    }
    assert_eq!(page.select(&sel("img, iframe, object, embed, link")).count(), 0);
    let csp = page
        .select(&sel("meta[http-equiv=\"Content-Security-Policy\"]"))
        .next()
        .and_then(|m| m.value().attr("content"))
        .unwrap_or_default()
        .to_owned();
    assert!(
        csp.starts_with("default-src 'none';")
            && !csp.contains("script-src")
            && !csp.contains("unsafe"),
        "{csp}"
    );
    let body: String = page.select(&sel("main")).next().unwrap().text().collect();
    assert!(
        body.contains("<script>document.title='INJECTED'</script>"),
        "hostile text shown as text"
    );
    assert!(body.contains("<img src=x onerror=alert(1)>"));
    let ids: Vec<&str> = page.select(&sel("[id]")).filter_map(|e| e.value().attr("id")).collect();
    let unique: std::collections::HashSet<&&str> = ids.iter().collect();
    assert_eq!(unique.len(), ids.len(), "unique ids");
    for a in page.select(&sel("a[href]")) {
        let target = a.value().attr("href").unwrap().trim_start_matches('#');
        assert!(ids.contains(&target), "dangling link #{target}");
    }
    // Side by side: the lower sentence shows both verdicts in one row.
    let row = page.select(&sel("tr.d-lower")).next().expect("a lower-support row");
    let cells: Vec<String> = row.select(&sel("td")).map(|td| td.text().collect()).collect();
    assert_eq!(cells.len(), 2);
    assert!(cells[0].contains("supported") && cells[1].contains("unsupported"), "{cells:?}");
}

#[test]
fn compare_equal_runs_and_the_tolerance() {
    let p = Pair::new();
    let (base, new) = (base_run(&p), new_run(&p));
    // A run against itself, and against another run of the same inputs: no change, exit 0.
    let again = p.check("base-again", &read_jsonl(&p.path("base.jsonl")), None);
    for other in [&base, &again] {
        let (o, c, _) = p.compare(&base, other, &[]);
        assert_eq!(code(&o), 0, "{}", stderr(&o));
        assert_eq!(c["decision"]["worse"], false);
        assert_eq!(c["decision"]["counted"], 0);
        assert!(c["answers"].as_array().unwrap().is_empty(), "{:#}", c["answers"]);
        let s = &c["summary"];
        assert_eq!(s["answers_unchanged"], s["answers_matched"]);
        assert_eq!(
            c["comparison"]["same"],
            json!({"tool": true, "store": true, "config": true, "answers": true})
        );
    }

    // The tolerance: exactly the counted number passes, one fewer fails.
    let (_, c, _) = p.compare(&base, &new, &[]);
    let counted = c["decision"]["counted"].as_u64().unwrap();
    assert!(counted >= 5, "{counted}");
    let (o, _, _) = p.compare(&base, &new, &["--tolerance", &counted.to_string()]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let (o, _, _) = p.compare(&base, &new, &["--tolerance", &(counted - 1).to_string()]);
    assert_eq!(code(&o), 1);

    // --strict counts more: warnings, lower support, answers that now fail, lower agreement.
    let (o, s, _) = p.compare(&base, &new, &["--strict", "--tolerance", &counted.to_string()]);
    assert_eq!(code(&o), 1);
    assert!(s["decision"]["counted"].as_u64().unwrap() > counted);
    assert!(entry(&s, "approved")["counted"].as_u64().unwrap() >= 1);

    // The reverse comparison: what improved is now what regressed, and the other way.
    let (_, r, _) = p.compare(&new, &base, &[]);
    assert_eq!(entry(&r, "better")["state"], "regressed");
    assert_eq!(entry(&r, "lower")["state"], "improved");
    assert_eq!(entry(&r, "fresh")["state"], "gone");
    assert_eq!(entry(&r, "gone")["state"], "new");
    assert_eq!(r["summary"]["resolved_by_kind"]["rejected_line"], 1);
    // Symmetry: what one direction adds, the other resolves, except the findings of
    // answers only in one run (added when new, never resolved when gone).
    let errors_of = |findings: &Path, id: &str| -> u64 {
        let v = read_json(findings);
        let a = v["answers"].as_array().unwrap().iter().find(|a| a["id"] == id).unwrap().clone();
        a["findings"].as_array().unwrap().iter().filter(|f| f["severity"] == "error").count() as u64
    };
    let (fwd, rev) = (&c["summary"], &r["summary"]);
    let n = |v: &Value| v.as_u64().unwrap();
    assert_eq!(n(&rev["added_errors"]), n(&fwd["resolved_errors"]) + errors_of(&base, "gone"));
    assert_eq!(n(&rev["resolved_errors"]), n(&fwd["added_errors"]) - errors_of(&new, "fresh"));
}

fn read_jsonl(p: &Path) -> Vec<Value> {
    std::fs::read_to_string(p)
        .unwrap()
        .lines()
        .filter(|l| !l.trim().is_empty())
        .map(|l| serde_json::from_str(l).unwrap())
        .collect()
}

#[test]
fn compare_refuses_bad_files_naming_them() {
    let p = Pair::new();
    let base = base_run(&p);
    let expect = |o: Output, needles: &[&str]| {
        assert_eq!(code(&o), 2, "{}", stderr(&o));
        for n in needles {
            assert!(stderr(&o).contains(n), "{n:?} not in {}", stderr(&o));
        }
    };
    let missing = p.path("missing.json");
    expect(p.compare(&base, &missing, &[]).0, &["cannot read", "missing.json"]);
    std::fs::write(p.path("trunc.json"), "{\"tool\": ").unwrap();
    expect(p.compare(&p.path("trunc.json"), &base, &[]).0, &["trunc.json", "not JSON"]);
    std::fs::write(p.path("log.sarif"), json!({"version": "2.1.0", "runs": []}).to_string())
        .unwrap();
    expect(p.compare(&base, &p.path("log.sarif"), &[]).0, &["log.sarif", "SARIF log"]);
    let mut v = read_json(&base);
    v["answers"][0]["sentences"][0]["verdict"] = json!("maybe");
    std::fs::write(p.path("shape.json"), v.to_string()).unwrap();
    expect(
        p.compare(&base, &p.path("shape.json"), &[]).0,
        &["shape.json", "answers[0].sentences[0].verdict"],
    );
    expect(p.compare(&base, &base, &["--score-drop", "2"]).0, &["--score-drop"]);
    // A shard's findings are not a whole run.
    let shard = p.path("shard.json");
    let o = Command::new(BIN)
        .args(["check", "--quiet", "--shard", "2/3", "--store"])
        .arg(p.path("store"))
        .arg("--answers")
        .arg(p.path("base.jsonl"))
        .arg("--json")
        .arg(&shard)
        .output()
        .unwrap();
    assert!(matches!(code(&o), 0 | 1));
    expect(
        p.compare(&base, &shard, &[]).0,
        &["shard.json", "shard 2 of 3 only", "plumbline merge"],
    );
    // A comparison result is not a findings document.
    let (_, _, _) = p.compare(&base, &base, &[]);
    std::fs::copy(p.path("cmp.json"), p.path("result.json")).unwrap();
    expect(p.compare(&p.path("result.json"), &base, &[]).0, &["result.json", "compare --json"]);
}

// ---------------------------------------------------------------------------------------
// Approved-answer regression

#[test]
fn approved_answer_thresholds_flag_count_and_gate() {
    let p = Pair::new();
    let close = json!({"id": "close", "user": "u-1",
        "answer": "Warranty claims stay open for 45 days from the date of purchase [1].",
        "citations": [{"ref": "1", "doc": "warranty.md"}],
        "approved_answer": "Warranty claims stay open for 45 days from the date of purchase."});
    let far = json!({"id": "far", "user": "u-1",
        "answer": "After that they close automatically [1].",
        "citations": [{"ref": "1", "doc": "warranty.md"}],
        "approved_answer": "Warranty claims stay open for 45 days from the date of purchase."});
    let none = answer("none", "Staff parking is free on weekdays [1].", "parking.txt");
    let answers = p.path("approved.jsonl");
    std::fs::write(&answers, format!("{close}\n{far}\n{none}\n")).unwrap();
    // (exit code, findings, HTML report, stderr)
    let check = |config: &str, accept: Option<&str>| -> (i32, Value, String, String) {
        let cfg = p.path("regression.toml");
        std::fs::write(&cfg, config).unwrap();
        let (json_out, html_out) = (p.path("approved.json"), p.path("approved.html"));
        let _ = std::fs::remove_file(&json_out);
        let _ = std::fs::remove_file(&html_out);
        let mut cmd = Command::new(BIN);
        cmd.args(["check", "--quiet", "--store"])
            .arg(p.path("store"))
            .arg("--answers")
            .arg(&answers)
            .arg("--principals")
            .arg(p.path("principals.json"))
            .arg("--config")
            .arg(&cfg)
            .arg("--json")
            .arg(&json_out)
            .arg("--html")
            .arg(&html_out);
        if let Some(a) = accept {
            let f = p.path("approved-decisions.jsonl");
            std::fs::write(&f, a).unwrap();
            cmd.arg("--accept").arg(f);
        }
        let o = cmd.output().unwrap();
        let findings = if json_out.exists() { read_json(&json_out) } else { Value::Null };
        (code(&o), findings, std::fs::read_to_string(&html_out).unwrap_or_default(), stderr(&o))
    };
    let kinds_of = |v: &Value, id: &str| -> Vec<String> {
        let a = v["answers"].as_array().unwrap().iter().find(|a| a["id"] == id).unwrap();
        kinds(&a["findings"])
    };

    // Off by default: the figures are recorded, nothing is flagged, the gate passes.
    let (code0, v, html, err) = check("", None);
    assert_eq!(code0, 0, "{err}");
    let ap = &v["summary"]["approved"];
    assert_eq!(ap["answers"], 2);
    assert!(ap.get("below_rouge_l").is_none() && ap.get("min_rouge_l").is_none());
    for k in ["mean_rouge1", "mean_rouge2", "mean_rougeL", "mean_bleu"] {
        assert!(ap[k].is_number(), "{k}");
    }
    assert!(kinds_of(&v, "far").is_empty());
    assert!(
        html.contains("id=\"approved-measures\"")
            && html.contains("recall-oriented")
            && html.contains("precision-oriented")
    );

    // Thresholds set: the far answer is flagged (a warning), the gate still passes.
    let cfg = "[regression]\nmin_rouge_l = 0.5\nmin_bleu = 30\n";
    let (code1, v, html, _) = check(cfg, None);
    assert_eq!(code1, 0, "reported, not gated, unless fail_on lists the kinds");
    assert_eq!(kinds_of(&v, "far"), ["below_approved_rouge_l", "below_approved_bleu"]);
    assert!(kinds_of(&v, "close").is_empty() && kinds_of(&v, "none").is_empty());
    let ap = &v["summary"]["approved"];
    assert_eq!(
        (ap["below_rouge_l"].as_u64(), ap["share_below_rouge_l"].as_f64()),
        (Some(1), Some(0.5))
    );
    assert_eq!((ap["below_bleu"].as_u64(), ap["min_bleu"].as_f64()), (Some(1), Some(30.0)));
    assert_eq!(v["summary"]["warnings"], 2);
    let page = Html::parse_document(&html);
    let cell = page
        .select(&Selector::parse("[data-count=\"approved.below_rouge_l\"]").unwrap())
        .next()
        .map(|c| c.text().collect::<String>());
    assert_eq!(cell.as_deref(), Some("1"));
    assert!(html.contains("below 0.5"), "the answer is marked below the threshold");

    // Listed in fail_on: the gate fails on it (exit 1) ...
    let gated = format!("{cfg}[gate]\nfail_on = [\"dead\", \"below_approved_rouge_l\"]\n");
    let (code2, v, _, _) = check(&gated, None);
    assert_eq!(code2, 1);
    let far = v["answers"].as_array().unwrap().iter().find(|a| a["id"] == "far").unwrap();
    assert_eq!(far["passed"], false);
    assert!(
        v["summary"]["gate"]["reasons"][0].as_str().unwrap().contains("below_approved_rouge_l ×1")
    );
    // ... unless a reviewer waived it.
    let waiver = json!({"answer": "far", "finding": "below_approved_rouge_l", "by": "rev-2", "note": "reworded on purpose"});
    let (code3, v, _, _) = check(&gated, Some(&format!("{waiver}\n")));
    assert_eq!(code3, 0);
    assert_eq!(v["decisions"]["applied"], 1);
    assert_eq!(v["summary"]["accepted"], 1);

    // A gate rule on a threshold that is not set is a config error (exit 2).
    let (code4, _, _, err) = check("[gate]\nfail_on = [\"below_approved_bleu\"]\n", None);
    assert_eq!(code4, 2);
    assert!(err.contains("regression.min_bleu is not set"), "{err}");
}
