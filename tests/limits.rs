//! Bounded work (issue 15, item 3): inputs that used to take minutes, gigabytes or a
//! traceback are judged or refused, by both checkers alike, with a clear reason. How
//! fast is measured by `benches/verifier.rs` (never by a timed test); what is tested
//! here is the verdict and its reason.
//!
//! The limits (README, "What the verifier checks"): a line of at most 64 MiB, nesting
//! at most 32 deep, a plain number of at most 100 characters, an exact number of at most
//! 4096 digits above and below its bar, at most 16 witnesses, and at most 5 * 10^7
//! evaluations for dense function pieces and lattice generating points.

use std::io::Write;
use std::path::PathBuf;

use naysayer::certificate::{verify_file, MAX_WITNESSES};
use naysayer::transcript::limits::{MAX_DEPTH, MAX_LINE_BYTES, MAX_NUMBER_CHARS};
use tempfile::TempDir;

mod common;
mod outside;
use common::{agree, both_reject, python_present, python_verdicts, write_lines};

fn header(class: &str) -> String {
    format!(
        r#"{{"type":"header","data":{{"format":1,"tool":"test","class":{class},"adversary":"hand","method":"hand","seed":0,"budget":1}}}}"#
    )
}

const CLASS: &str =
    r#"{"kind":"feasibility","dim":1,"half_width":1.0,"rho":0.01,"promise":"may-be-empty"}"#;

fn query(offset: &str) -> String {
    format!(
        r#"{{"type":"query","data":{{"index":1,"point":[0.5],"answer":{{"kind":"cut","normal":{{"axis":0,"sign":1}},"offset":{offset}}}}}}}"#
    )
}

fn last(instances: &str) -> String {
    format!(
        r#"{{"type":"final","data":{{"queries_used":1,"ending":{{"kind":"budget-exhausted"}},"certificate":{{"schema":1,"prefix":1,"instances":[{instances}]}}}}}}"#
    )
}

fn rejected(dir: &TempDir, name: &str, lines: &[String]) -> String {
    let path = write_lines(dir.path(), name, lines);
    if python_present() {
        both_reject(&path).0
    } else {
        verify_file(&path).expect_err("Rust accepts it").to_string()
    }
}

fn valid(dir: &TempDir, name: &str, lines: &[String]) {
    let path = write_lines(dir.path(), name, lines);
    if let Err(e) = verify_file(&path) {
        panic!("{name}: {e}");
    }
    if python_present() {
        assert!(agree(&path), "{name}");
    }
}

const BALLS: &str = r#"{"kind":"empty"},{"kind":"ball","center":[-0.5],"radius":0.01}"#;

#[test]
fn the_control_game_is_valid() {
    let dir = TempDir::new().unwrap();
    valid(
        &dir,
        "control.jsonl",
        &[header(CLASS), query("0.5"), last(BALLS)],
    );
}

#[test]
fn huge_exponents_in_exact_text_are_refused_at_once() {
    let dir = TempDir::new().unwrap();
    // A 100 000-digit exponent (over a minute in Rust before), and a 14-character one
    // (the Python checker hung computing 10^12345678901234).
    for (name, exact) in [
        ("long-exponent", format!("1e{}", "1".repeat(100_000))),
        ("short-exponent", "1e12345678901234".to_string()),
        ("negative-exponent", "5e-12345678901234".to_string()),
    ] {
        let offset = format!(r#"{{"exact":"{exact}","approx":0.5}}"#);
        let reason = rejected(&dir, name, &[header(CLASS), query(&offset), last(BALLS)]);
        assert!(reason.contains("digits"), "{name}: {reason}");
    }
}

#[test]
fn many_witnesses_are_refused() {
    let dir = TempDir::new().unwrap();
    // 20 000 empty witnesses (60 s and 5 GB in Python before), 5000 disjoint balls (both
    // checkers hung on the pairwise check).
    let empties = vec![r#"{"kind":"empty"}"#; 20_000].join(",");
    let balls: Vec<String> = (0..5000)
        .map(|k| {
            format!(
                r#"{{"kind":"ball","center":[{}],"radius":0.0001}}"#,
                -0.99 + 0.0003 * f64::from(k)
            )
        })
        .collect();
    let class = CLASS.replace("0.01", "0.0001");
    for (name, instances) in [("empties", empties), ("balls", balls.join(","))] {
        let reason = rejected(
            &dir,
            name,
            &[header(&class), query("0.5"), last(&instances)],
        );
        assert!(
            reason.contains(&format!("limit of {MAX_WITNESSES}")),
            "{name}: {reason}"
        );
    }
    // At the limit: the empty set and 15 disjoint balls certify the bound.
    let mut at_limit = vec![r#"{"kind":"empty"}"#.to_string()];
    at_limit.extend(balls.iter().take(MAX_WITNESSES - 1).cloned());
    valid(
        &dir,
        "sixteen.jsonl",
        &[header(&class), query("0.5"), last(&at_limit.join(","))],
    );
}

#[test]
fn deep_nesting_is_refused_with_a_verdict_line() {
    let dir = TempDir::new().unwrap();
    // An unknown key of the header's data (itself at level 2) holding nested arrays:
    // 33 levels in all (one beyond the limit), and 100 000 (a traceback from the Python
    // checker before).
    for (name, depth) in [("deep33", MAX_DEPTH - 1), ("deep100000", 100_000)] {
        let junk = format!("{}{}", "[".repeat(depth), "]".repeat(depth));
        let head = header(CLASS).replace(r#""seed":0"#, &format!(r#""seed":0,"junk":{junk}"#));
        let reason = rejected(&dir, name, &[head, query("0.5"), last(BALLS)]);
        assert!(reason.contains("nest deeper"), "{name}: {reason}");
    }
    // 32 levels are read (the unknown key is ignored).
    let depth = MAX_DEPTH - 2;
    let junk = format!("{}{}", "[".repeat(depth), "]".repeat(depth));
    let head = header(CLASS).replace(r#""seed":0"#, &format!(r#""seed":0,"junk":{junk}"#));
    valid(&dir, "deep-ok.jsonl", &[head, query("0.5"), last(BALLS)]);
}

#[test]
fn long_numbers_are_refused() {
    let dir = TempDir::new().unwrap();
    let fits = format!("0.{}", "4".repeat(MAX_NUMBER_CHARS - 2));
    valid(
        &dir,
        "fits.jsonl",
        &[header(CLASS), query(&fits), last(BALLS)],
    );
    let long = format!("0.{}", "4".repeat(MAX_NUMBER_CHARS - 1));
    let reason = rejected(
        &dir,
        "long.jsonl",
        &[header(CLASS), query(&long), last(BALLS)],
    );
    assert!(reason.contains("characters"), "{reason}");
    let long_int = "1".repeat(100_000);
    rejected(
        &dir,
        "long-int.jsonl",
        &[header(CLASS), query(&long_int), last(BALLS)],
    );
}

/// A file whose line `line` (1-based) is `size` zero bytes long, written sparsely: the
/// bytes are never held in memory here, and the checkers must refuse the line after
/// reading at most the limit of it.
fn sparse_file(dir: &TempDir, name: &str, lines_before: &[String], size: u64) -> PathBuf {
    let path = dir.path().join(name);
    let mut file = std::fs::File::create(&path).unwrap();
    for line in lines_before {
        writeln!(file, "{line}").unwrap();
    }
    let start = file.metadata().unwrap().len();
    file.set_len(start + size).unwrap();
    path
}

#[test]
fn a_one_gibibyte_line_is_refused_early() {
    let dir = TempDir::new().unwrap();
    for (name, before) in [
        ("gib-last.jsonl", vec![header(CLASS), query("0.5")]),
        ("gib-first.jsonl", vec![]),
    ] {
        let path = sparse_file(&dir, name, &before, 1 << 30);
        let line = before.len() as u64 + 1;
        let reason = match verify_file(&path) {
            Err(naysayer::Error::Transcript { line: at, reason }) => {
                assert_eq!(at, line, "{reason}");
                reason
            }
            other => panic!("{other:?}"),
        };
        assert!(reason.contains(&MAX_LINE_BYTES.to_string()), "{reason}");
        if python_present() {
            let verdict = python_verdicts(std::slice::from_ref(&path)).remove(0);
            assert!(
                verdict.contains(&format!("REJECTED {}: line {line}: ", path.display()))
                    && verdict.contains("longer than"),
                "{verdict}"
            );
        }
    }
}

#[test]
fn a_long_line_in_the_middle_is_refused_at_its_number() {
    let dir = TempDir::new().unwrap();
    let path = dir.path().join("middle.jsonl");
    let mut file = std::fs::File::create(&path).unwrap();
    writeln!(file, "{}", header(CLASS)).unwrap();
    // Line 2: spaces (valid JSON whitespace) beyond the limit, then a query.
    let chunk = vec![b' '; 1 << 20];
    for _ in 0..=(MAX_LINE_BYTES >> 20) {
        file.write_all(&chunk).unwrap();
    }
    writeln!(file, "{}", query("0.5")).unwrap();
    writeln!(file, "{}", last(BALLS)).unwrap();
    drop(file);
    let reason = match verify_file(&path) {
        Err(naysayer::Error::Transcript { line: 2, reason }) => reason,
        other => panic!("{other:?}"),
    };
    assert!(reason.contains("longer than"), "{reason}");
    if python_present() {
        let verdict = python_verdicts(std::slice::from_ref(&path)).remove(0);
        assert!(verdict.contains(": line 2: "), "{verdict}");
    }
}

#[test]
fn dense_work_beyond_the_limit_is_refused() {
    let dir = TempDir::new().unwrap();
    let class =
        r#"{"kind":"first-order","dim":2,"half_width":1.0,"eps":0.01,"lipschitz":1.0,"norm":"l2"}"#;
    let answer = r#"{"kind":"first-order","value":0.0,"subgradient":[0.0,0.0]}"#;
    let queries: Vec<String> = (1..=1000)
        .map(|t| {
            format!(
                r#"{{"type":"query","data":{{"index":{t},"point":[0.0,0.0],"answer":{answer}}}}}"#
            )
        })
        .collect();
    // 25 001 pieces with two nonzero slope entries per witness, two witnesses, 1000
    // certified answers: 1000 * 2 * 50 002 evaluations > 5 * 10^7.
    let piece = r#"{"slope":[0.001,0.001],"intercept":-1.0}"#;
    let mut pieces = vec![r#"{"slope":[0.0,0.0],"intercept":0.0}"#.to_string()];
    pieces.extend(std::iter::repeat_n(piece.to_string(), 25_001));
    let witness = |c: &str| {
        format!(
            r#"{{"kind":"function","pieces":[{}],"center":[{c},0.0],"floor":0.0,"slope":1.0}}"#,
            pieces.join(",")
        )
    };
    let fin = format!(
        r#"{{"type":"final","data":{{"queries_used":1000,"ending":{{"kind":"budget-exhausted"}},"certificate":{{"schema":1,"prefix":1000,"instances":[{},{}]}}}}}}"#,
        witness("-0.5"),
        witness("0.5")
    );
    let mut lines = vec![header(class).replace(r#""budget":1"#, r#""budget":1000"#)];
    lines.extend(queries);
    lines.push(fin);
    let reason = rejected(&dir, "dense.jsonl", &lines);
    assert!(reason.contains("50000000"), "{reason}");
}
