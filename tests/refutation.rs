//! The refutation rule (issue 15, item 1), in both checkers: the certified lower bound
//! T* + 1 comes only from at least two witnesses whose solution sets are pairwise
//! disjoint; a witness that refutes the method's output is an outcome ("output refuted
//! by witness #j") and never gives or raises a bound.
//!
//! The first case is the issue's: d = 1, R = 1, rho = 0.4, K promised nonempty, one
//! answer, the cut {y < 0}. Every admissible K (a convex set containing a 0.4-ball inside
//! [-1, 0)) contains -0.5, so a method could stop after that one query; a single witness
//! B(-0.5, 0.4) refutes the output 0.5 but proves nothing about other methods. Before
//! the rule, both checkers printed "certified lower bound 2". Variants cover every class.

use std::path::{Path, PathBuf};

use naysayer::certificate::{verify_file, Outcome};
use tempfile::TempDir;

mod common;
mod outside;
use common::{agree, check_cli, python_present, verdict_field, write_lines};

fn header(class: &str) -> String {
    format!(
        r#"{{"type":"header","data":{{"format":1,"tool":"test","class":{class},"adversary":"hand","method":"hand","seed":0,"budget":10}}}}"#
    )
}

fn query(index: u64, point: &str, answer: &str) -> String {
    format!(r#"{{"type":"query","data":{{"index":{index},"point":{point},"answer":{answer}}}}}"#)
}

fn last(used: u64, output: &str, prefix: u64, instances: &str) -> String {
    format!(
        r#"{{"type":"final","data":{{"queries_used":{used},"ending":{{"kind":"output","output":{output}}},"certificate":{{"schema":1,"prefix":{prefix},"instances":[{instances}]}}}}}}"#
    )
}

const FEASIBILITY_NONEMPTY: &str =
    r#"{"kind":"feasibility","dim":1,"half_width":1.0,"rho":0.4,"promise":"nonempty"}"#;
const FEASIBILITY: &str =
    r#"{"kind":"feasibility","dim":1,"half_width":1.0,"rho":0.4,"promise":"may-be-empty"}"#;
const CUT_BELOW_ZERO: &str = r#"{"kind":"cut","normal":{"axis":0,"sign":1},"offset":0.0}"#;
const POINT_HALF: &str = r#"{"kind":"point","point":[0.5]}"#;
const BALL: &str = r#"{"kind":"ball","center":[-0.5],"radius":0.4}"#;

/// Writes a one-query transcript.
fn transcript(dir: &Path, name: &str, class: &str, q: String, output: &str, wits: &str) -> PathBuf {
    write_lines(dir, name, &[header(class), q, last(1, output, 1, wits)])
}

/// Both checkers: valid, no certified lower bound, the output refuted by witness #1 (or
/// `empty-refuted`).
fn refuted_without_bound(path: &Path, outcome: &str) {
    let verdict = verify_file(path).unwrap();
    assert_eq!(verdict.certified_lower_bound(), None, "{verdict:?}");
    assert_eq!(verdict.witness_prefix, Some(1));
    match outcome {
        "output-refuted" => assert_eq!(verdict.outcome, Outcome::OutputRefuted { witness: 0 }),
        _ => assert_eq!(verdict.outcome, Outcome::EmptyRefuted { witness: 0 }),
    }
    let (code, stdout) = check_cli(path);
    assert_eq!(code, Some(0), "{stdout}");
    assert!(
        stdout.contains("certified lower bound  none"),
        "check prints no bound: {stdout}"
    );
    assert!(stdout.contains("refuted by witness #1"), "{stdout}");
    if python_present() {
        assert!(agree(path));
        let line = common::python_verdicts(&[path.to_path_buf()]).remove(0);
        assert_eq!(verdict_field(&line, "certified_lower_bound"), "none");
        assert_eq!(verdict_field(&line, "outcome"), outcome);
    }
}

#[test]
fn a_single_refuting_ball_certifies_no_bound() {
    let dir = TempDir::new().unwrap();
    let q = query(1, "[0.0]", CUT_BELOW_ZERO);
    let path = transcript(
        dir.path(),
        "issue.jsonl",
        FEASIBILITY_NONEMPTY,
        q,
        POINT_HALF,
        BALL,
    );
    refuted_without_bound(&path, "output-refuted");
}

#[test]
fn overlapping_refuting_balls_certify_no_bound() {
    let dir = TempDir::new().unwrap();
    let q = query(1, "[0.0]", CUT_BELOW_ZERO);
    let two = format!(r#"{BALL},{{"kind":"ball","center":[-0.55],"radius":0.4}}"#);
    let path = transcript(
        dir.path(),
        "two.jsonl",
        FEASIBILITY_NONEMPTY,
        q,
        POINT_HALF,
        &two,
    );
    refuted_without_bound(&path, "output-refuted");
}

#[test]
fn may_be_empty_refutations_certify_no_bound() {
    let dir = TempDir::new().unwrap();
    // The empty set alone refutes any point.
    let q = query(1, "[0.0]", CUT_BELOW_ZERO);
    let path = transcript(
        dir.path(),
        "empty-refutes-point.jsonl",
        FEASIBILITY,
        q.clone(),
        POINT_HALF,
        r#"{"kind":"empty"}"#,
    );
    refuted_without_bound(&path, "output-refuted");
    // A ball alone refutes "empty".
    let path = transcript(
        dir.path(),
        "ball-refutes-empty.jsonl",
        FEASIBILITY,
        q.clone(),
        r#"{"kind":"empty"}"#,
        BALL,
    );
    refuted_without_bound(&path, "empty-refuted");
    // Control: the empty set and a ball are disjoint, so the same answer certifies the
    // bound 2, and the empty set still refutes the point.
    let both = format!(r#"{{"kind":"empty"}},{BALL}"#);
    let path = transcript(dir.path(), "both.jsonl", FEASIBILITY, q, POINT_HALF, &both);
    let verdict = verify_file(&path).unwrap();
    assert_eq!(verdict.certified_lower_bound(), Some(2));
    assert_eq!(verdict.outcome, Outcome::OutputRefuted { witness: 0 });
    if python_present() {
        assert!(agree(&path));
    }
}

#[test]
fn a_single_refuting_function_certifies_no_bound() {
    let dir = TempDir::new().unwrap();
    let class =
        r#"{"kind":"first-order","dim":1,"half_width":1.0,"eps":0.1,"lipschitz":1.0,"norm":"l2"}"#;
    // f(y) = max(y, -1 + |y + 1|): the answer at 0 is (0, 1); min f = -1 at -1; the
    // output 0.5 has f = 0.5 > -1 + eps.
    let q = query(
        1,
        "[0.0]",
        r#"{"kind":"first-order","value":0.0,"subgradient":[1.0]}"#,
    );
    let f = r#"{"kind":"function","pieces":[{"slope":[1.0],"intercept":0.0}],"center":[-1.0],"floor":-1.0,"slope":1.0}"#;
    let path = transcript(
        dir.path(),
        "function.jsonl",
        class,
        q.clone(),
        POINT_HALF,
        f,
    );
    refuted_without_bound(&path, "output-refuted");
    // Two copies of the function: their eps-solution sets coincide.
    let path = transcript(
        dir.path(),
        "functions.jsonl",
        class,
        q,
        POINT_HALF,
        &format!("{f},{f}"),
    );
    refuted_without_bound(&path, "output-refuted");
}

#[test]
fn a_single_refuting_lattice_hull_certifies_no_bound() {
    let dir = TempDir::new().unwrap();
    // Pure integer: {0, 1}, the cut {y < 1} at the query 1; the witness {0}; the output 1.
    let class =
        r#"{"kind":"lattice","lower":[0],"upper":[1],"cont_dim":0,"half_width":1.0,"rho":0.5}"#;
    let q = query(1, "[1.0]", r#"{"kind":"cut","normal":[1.0],"offset":1.0}"#);
    let hull =
        r#"{"kind":"lattice-hull","points":[],"fibre":{"integer":[0],"center":[],"radius":0.5}}"#;
    let out = r#"{"kind":"point","point":[1.0]}"#;
    let path = transcript(dir.path(), "pure.jsonl", class, q, out, hull);
    refuted_without_bound(&path, "output-refuted");
    // Mixed: {0, 1} x [-1, 1], the same cut lifted; the witness {0} x B(0, 0.25).
    let class =
        r#"{"kind":"lattice","lower":[0],"upper":[1],"cont_dim":1,"half_width":1.0,"rho":0.25}"#;
    let q = query(
        1,
        "[1.0,0.0]",
        r#"{"kind":"cut","normal":[1.0,0.0],"offset":1.0}"#,
    );
    let hull = r#"{"kind":"lattice-hull","points":[],"fibre":{"integer":[0],"center":[0.0],"radius":0.25}}"#;
    let out = r#"{"kind":"point","point":[1.0,0.0]}"#;
    let path = transcript(dir.path(), "mixed.jsonl", class, q.clone(), out, hull);
    refuted_without_bound(&path, "output-refuted");
    // The output "empty": the hull with a fibre ball refutes it.
    let path = transcript(
        dir.path(),
        "mixed-empty.jsonl",
        class,
        q,
        r#"{"kind":"empty"}"#,
        hull,
    );
    refuted_without_bound(&path, "empty-refuted");
}

#[test]
fn a_certificate_that_neither_separates_nor_refutes_is_rejected() {
    let dir = TempDir::new().unwrap();
    // The output -0.5 lies in the one witness: nothing is shown.
    let q = query(1, "[0.0]", CUT_BELOW_ZERO);
    let path = transcript(
        dir.path(),
        "nothing.jsonl",
        FEASIBILITY_NONEMPTY,
        q,
        r#"{"kind":"point","point":[-0.5]}"#,
        BALL,
    );
    assert!(verify_file(&path).is_err());
    if python_present() {
        assert!(!agree(&path));
    }
}
