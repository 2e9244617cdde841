//! Tampered transcripts: `naysayer check` and `verify_file` must reject each one with an
//! error naming the offending line (exit code 1), and accept the original (exit code 0).
//!
//! The original comes from `naysayer play -d 2 --rho 0.01 -t FILE`: midpoint against
//! the halving adversary, k = 6, so 13 queries; line 1 is the header, lines 2..=14 the
//! queries 1..=13, line 15 the final record, whose witnesses certify the first 12
//! answers.

use std::path::{Path, PathBuf};
use std::process::Command;

use naysayer::certificate::verify_file;
use naysayer::exact::{f64_to_rational, nearest_f64, parse_rational, rational_to_string, Exact};
use naysayer::Error;
use serde_json::{json, Value};
use tempfile::TempDir;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

struct Fixture {
    dir: TempDir,
    lines: Vec<String>,
}

impl Fixture {
    fn new() -> Fixture {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("original.jsonl");
        let out = Command::new(BIN)
            .args(["play", "-d", "2", "--rho", "0.01", "-t"])
            .arg(&path)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(0), "play failed: {out:?}");
        let text = std::fs::read_to_string(&path).unwrap();
        let lines: Vec<String> = text.lines().map(str::to_string).collect();
        assert_eq!(lines.len(), 15, "header + 13 queries + final");
        let fixture = Fixture { dir, lines };
        assert_eq!(
            fixture.value(15)["data"]["certificate"]["prefix"],
            json!(12)
        );
        fixture
    }

    /// Line `n` (1-based) as JSON.
    fn value(&self, n: usize) -> Value {
        serde_json::from_str(&self.lines[n - 1]).unwrap()
    }

    /// Writes `lines` (each followed by a newline) to a new file in the temp dir.
    fn write(&self, name: &str, lines: &[String]) -> PathBuf {
        let path = self.dir.path().join(name);
        let mut text = lines.join("\n");
        text.push('\n');
        std::fs::write(&path, text).unwrap();
        path
    }

    /// A copy with line `n` replaced by `f(value of line n)`.
    fn edited(&self, name: &str, n: usize, f: impl FnOnce(&mut Value)) -> PathBuf {
        let mut value = self.value(n);
        f(&mut value);
        let mut lines = self.lines.clone();
        lines[n - 1] = serde_json::to_string(&value).unwrap();
        self.write(name, &lines)
    }
}

/// Runs `naysayer check FILE`: (exit code, stdout).
fn check(path: &Path) -> (Option<i32>, String) {
    let out = Command::new(BIN).arg("check").arg(path).output().unwrap();
    (
        out.status.code(),
        String::from_utf8(out.stdout).expect("utf-8 output"),
    )
}

/// Both verifiers reject `path` naming line `line`; returns the library's reason.
fn assert_rejected_at(path: &Path, line: u64) -> String {
    let reason = match verify_file(path) {
        Err(Error::Transcript { line: got, reason }) => {
            assert_eq!(got, line, "verify_file blamed the wrong line: {reason}");
            reason
        }
        other => panic!("verify_file should reject with a transcript error: {other:?}"),
    };
    let (code, stdout) = check(path);
    assert_eq!(code, Some(1), "check exit code; stdout: {stdout}");
    assert!(
        stdout.contains(&format!("transcript line {line}:")),
        "check should name line {line}: {stdout}"
    );
    reason
}

/// The cut of the query on line `n`: (axis, sign, offset as f64, point).
fn cut_of(value: &Value) -> (usize, f64, f64, Vec<f64>) {
    let data = &value["data"];
    let answer = &data["answer"];
    assert_eq!(answer["kind"], "cut");
    let axis = answer["normal"]["axis"].as_u64().expect("axis normal") as usize;
    let sign = answer["normal"]["sign"].as_f64().unwrap();
    let offset = answer["offset"].as_f64().expect("plain f64 offset");
    let point = data["point"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    (axis, sign, offset, point)
}

/// The largest f64 below x.
fn next_down(x: f64) -> f64 {
    if x == 0.0 {
        -f64::from_bits(1)
    } else if x > 0.0 {
        f64::from_bits(x.to_bits() - 1)
    } else {
        f64::from_bits(x.to_bits() + 1)
    }
}

#[test]
fn original_transcript_is_accepted() {
    let fx = Fixture::new();
    let path = fx.write("copy.jsonl", &fx.lines);
    let verdict = verify_file(&path).unwrap();
    assert_eq!(verdict.queries_used, 13);
    assert_eq!(verdict.certified_lower_bound(), Some(13));
    let (code, stdout) = check(&path);
    assert_eq!(code, Some(0), "{stdout}");
    assert!(stdout.contains("valid certificate"), "{stdout}");
}

#[test]
fn loosened_cut_offset_is_rejected_at_its_line() {
    let fx = Fixture::new();
    // Queries 1, 5 (inside the certified prefix) and 13 (after it).
    for n in [2, 6, 14] {
        let (axis, sign, offset, point) = cut_of(&fx.value(n));
        assert!(
            sign * point[axis] >= offset,
            "original cut excludes its query"
        );
        let path = fx.edited(&format!("loose{n}.jsonl"), n, |v| {
            v["data"]["answer"]["offset"] = json!(sign * point[axis] + 0.25);
        });
        let reason = assert_rejected_at(&path, n as u64);
        assert!(reason.contains("kept side"), "{reason}");
    }
}

#[test]
fn cut_offset_loosened_below_f64_resolution_is_rejected() {
    // b = a.x + 1/(3 * 2^70): its nearest f64 is a.x itself, so only exact arithmetic
    // sees that the query lies on the kept side.
    let fx = Fixture::new();
    let n = 6;
    let (axis, sign, _, point) = cut_of(&fx.value(n));
    let tiny = parse_rational(&format!("1/{}", 3u128 << 70)).unwrap();
    let b = f64_to_rational(sign * point[axis]) + tiny;
    assert_eq!(nearest_f64(&b), sign * point[axis]);
    let path = fx.edited("loose_tiny.jsonl", n, |v| {
        v["data"]["answer"]["offset"] =
            json!({"exact": rational_to_string(&b), "approx": nearest_f64(&b)});
    });
    assert_rejected_at(&path, n as u64);
}

#[test]
fn query_moved_into_the_kept_side_is_rejected_at_its_line() {
    let fx = Fixture::new();
    for n in [4, 9] {
        let (axis, sign, offset, _) = cut_of(&fx.value(n));
        // Far into the kept side, and one ulp into it: sign * x_axis < offset.
        for (tag, signed) in [("far", offset - 0.1), ("ulp", next_down(offset))] {
            let path = fx.edited(&format!("moved{n}{tag}.jsonl"), n, |v| {
                v["data"]["point"][axis] = json!(sign * signed);
            });
            let reason = assert_rejected_at(&path, n as u64);
            assert!(reason.contains("kept side"), "{reason}");
        }
    }
}

#[test]
fn witness_ball_touching_a_cut_is_rejected_at_the_cut_line() {
    let fx = Fixture::new();
    let last = fx.value(15);
    let prefix = last["data"]["certificate"]["prefix"].as_u64().unwrap() as usize;
    let instances = &last["data"]["certificate"]["instances"];
    let ball = instances
        .as_array()
        .unwrap()
        .iter()
        .position(|w| w["kind"] == "ball")
        .expect("a ball witness");
    let center: Exact = serde_json::from_value(instances[ball]["center"][0].clone()).unwrap();
    let rho = instances[ball]["radius"].as_f64().unwrap();
    assert_eq!(rho, 0.01);
    // Axis-0 cuts of the certified prefix: slack b - sign * c_0 of each.
    let c0 = center.to_rational();
    let mut cuts = Vec::new();
    for n in 2..=prefix + 1 {
        let (axis, sign, offset, _) = cut_of(&fx.value(n));
        if axis == 0 {
            let slack = if sign > 0.0 {
                f64_to_rational(offset) - c0.clone()
            } else {
                f64_to_rational(offset) + c0.clone()
            };
            cuts.push((n, sign, offset, slack));
        }
    }
    // The tightest cut (earliest on ties); moving the centre towards it until
    // a.c + rho = b touches it and keeps every other cut strict (same-sign cuts keep
    // more slack, opposite-sign cuts gain slack).
    let (line, sign, offset, _) = cuts
        .iter()
        .min_by(|a, b| a.3.cmp(&b.3).then(a.0.cmp(&b.0)))
        .cloned()
        .expect("an axis-0 cut");
    let b_minus_rho = f64_to_rational(offset) - f64_to_rational(rho);
    let moved = if sign > 0.0 {
        b_minus_rho
    } else {
        -b_minus_rho
    };
    let moved = Exact::from_rational(moved);
    assert!(
        !moved.is_f64(),
        "b - rho is not an f64 here: the exact form is used"
    );
    let path = fx.edited("touch.jsonl", 15, |v| {
        v["data"]["certificate"]["instances"][ball]["center"][0] =
            serde_json::to_value(&moved).unwrap();
    });
    let reason = assert_rejected_at(&path, line as u64);
    assert!(reason.contains("strictly inside"), "{reason}");

    // Control: the same move stopped one hair short (a.c + rho < b) is accepted.
    let hair = parse_rational(&format!("1/{}", 1u128 << 100)).unwrap();
    let short = if sign > 0.0 {
        moved.to_rational() - hair
    } else {
        moved.to_rational() + hair
    };
    let path = fx.edited("short.jsonl", 15, |v| {
        v["data"]["certificate"]["instances"][ball]["center"][0] =
            serde_json::to_value(Exact::from_rational(short)).unwrap();
    });
    assert!(verify_file(&path).is_ok());
    assert_eq!(check(&path).0, Some(0));
}

#[test]
fn truncated_file_is_rejected_at_its_last_line() {
    let fx = Fixture::new();
    // The final line dropped: the last line (14) is a query, not the final record.
    let path = fx.write("dropped.jsonl", &fx.lines[..14]);
    let reason = assert_rejected_at(&path, 14);
    assert!(reason.contains("truncated"), "{reason}");
    // The last line cut in half (no trailing newline, as a crashed writer leaves it).
    let mut lines = fx.lines.clone();
    let half = lines[14].len() / 2;
    lines[14].truncate(half);
    let path = fx.dir.path().join("half.jsonl");
    std::fs::write(&path, lines.join("\n")).unwrap();
    let reason = assert_rejected_at(&path, 15);
    assert!(reason.contains("truncated"), "{reason}");
    // A query line cut in half as the last line.
    let mut lines = fx.lines[..10].to_vec();
    let half = lines[9].len() / 2;
    lines[9].truncate(half);
    let path = fx.write("half_query.jsonl", &lines);
    assert_rejected_at(&path, 10);
}

#[test]
fn non_json_line_is_rejected_at_its_line() {
    let fx = Fixture::new();
    for (n, text) in [
        (7, "this is not json"),
        (3, ""),
        (12, "{\"type\":\"query\""),
    ] {
        let mut lines = fx.lines.clone();
        lines[n - 1] = text.to_string();
        let path = fx.write(&format!("bad{n}.jsonl"), &lines);
        assert_rejected_at(&path, n as u64);
    }
}

#[test]
fn swapped_query_lines_are_rejected_at_the_first() {
    let fx = Fixture::new();
    let mut lines = fx.lines.clone();
    lines.swap(3, 4); // lines 4 and 5: queries 3 and 4
    let path = fx.write("swapped.jsonl", &lines);
    let reason = assert_rejected_at(&path, 4);
    assert!(reason.contains("out of order"), "{reason}");
}

#[test]
fn header_in_place_of_a_query_is_rejected_at_its_line() {
    let fx = Fixture::new();
    let mut lines = fx.lines.clone();
    lines[2] = lines[0].clone(); // line 3 (query 2) becomes a second header
    let path = fx.write("header3.jsonl", &lines);
    let reason = assert_rejected_at(&path, 3);
    assert!(reason.contains("header"), "{reason}");
}

/// FAILS on the current src: an extra line anywhere is blamed on the final line
/// ("the final record says 13 queries were used, but it stands on line 16"), because
/// `Checker::new` compares the final record's line with `queries_used + 2` before any
/// record is read. The first wrong record is the second header, on line 2.
#[test]
fn duplicated_header_is_rejected_at_its_line() {
    let fx = Fixture::new();
    let mut lines = fx.lines.clone();
    lines.insert(1, lines[0].clone());
    let path = fx.write("dup_header.jsonl", &lines);
    let reason = assert_rejected_at(&path, 2);
    assert!(reason.contains("header"), "{reason}");
}

/// FAILS on the current src, for the same reason as the duplicated header: a repeated
/// or missing query record is blamed on the final line (16 or 14), not on line 4, the
/// first record whose index is not the next one.
#[test]
fn repeated_or_missing_query_is_rejected_at_its_line() {
    let fx = Fixture::new();
    let mut lines = fx.lines.clone();
    lines.insert(3, lines[2].clone()); // query 2 twice: lines 3 and 4
    let path = fx.write("repeated.jsonl", &lines);
    assert_rejected_at(&path, 4);
    let mut lines = fx.lines.clone();
    lines.remove(3); // query 3 missing: line 4 holds query 4
    let path = fx.write("missing.jsonl", &lines);
    assert_rejected_at(&path, 4);
}

#[test]
fn wrong_format_version_is_rejected_at_line_one() {
    let fx = Fixture::new();
    for version in [0, 2, 999] {
        let path = fx.edited(&format!("format{version}.jsonl"), 1, |v| {
            v["data"]["format"] = json!(version);
        });
        let reason = assert_rejected_at(&path, 1);
        assert!(reason.contains("format"), "{reason}");
    }
}

#[test]
fn witness_radius_other_than_rho_is_rejected_at_the_final_line() {
    let fx = Fixture::new();
    let ball = fx.value(15)["data"]["certificate"]["instances"]
        .as_array()
        .unwrap()
        .iter()
        .position(|w| w["kind"] == "ball")
        .expect("a ball witness");
    // Larger, smaller, and one ulp off.
    for (tag, radius) in [
        ("big", 0.02),
        ("small", 0.005),
        ("ulp", f64::from_bits(0.01f64.to_bits() + 1)),
    ] {
        let path = fx.edited(&format!("radius_{tag}.jsonl"), 15, |v| {
            v["data"]["certificate"]["instances"][ball]["radius"] = json!(radius);
        });
        let reason = assert_rejected_at(&path, 15);
        assert!(reason.contains("radius"), "{reason}");
    }
}
