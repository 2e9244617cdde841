//! The first-order audit of `naysayer check`, the exact instance oracle and `naysayer
//! replay` (issue 5).
//!
//! The explicit function used throughout (not an adversary) is, on [-1, 1]^2 with L = 1,
//!   f(y) = max( -0.25 + 0.25 ||y - c||_inf, -0.25 + a_p . (y - c), p = 1, 2, 3 ),
//! c = (0.375, -0.25), a_1 = (0.75, 0.125), a_2 = (-0.5, 0.5), a_3 = (0, -0.875): every
//! piece passes through (c, -0.25), so f has its minimum -0.25 at c; the pieces' l2
//! norms are at most 0.875 <= L.

use std::path::{Path, PathBuf};
use std::process::Command;

use num_rational::BigRational;
use num_traits::{Signed, Zero};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use naysayer::adversary::instance_oracle::{InstanceOracle, INSTANCE_NAME};
use naysayer::adversary::Adversary;
use naysayer::certificate::verify_records;
use naysayer::class::{Class, FirstOrderClass, LipschitzNorm};
use naysayer::cli::audit::{self, Claim, Violation, WitnessFile};
use naysayer::exact::{f64_to_rational, Exact};
use naysayer::game::{self, GameSettings, Observer};
use naysayer::instance::{AffinePiece, FunctionWitness, Witness};
use naysayer::method;
use naysayer::oracle::Answer;
use naysayer::transcript::{Ending, FinalRecord, Header};
use naysayer::transcript::{Flush, Record, TranscriptReader, TranscriptWriter, FORMAT_VERSION};

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

fn class(eps: f64) -> FirstOrderClass {
    FirstOrderClass::new(2, 1.0, eps, 1.0, LipschitzNorm::L2).unwrap()
}

/// The explicit function of the module docs.
fn function() -> FunctionWitness {
    let c = [0.375, -0.25];
    let floor = -0.25;
    let piece = |a: [f64; 2]| AffinePiece {
        slope: a.iter().map(|v| Exact::Float(*v)).collect(),
        // floor - a . c, exact in f64 for these dyadic numbers.
        intercept: Exact::Float(floor - a[0] * c[0] - a[1] * c[1]),
    };
    FunctionWitness {
        pieces: vec![
            piece([0.75, 0.125]),
            piece([-0.5, 0.5]),
            piece([0.0, -0.875]),
        ],
        center: c.iter().map(|v| Exact::Float(*v)).collect(),
        floor: Exact::Float(floor),
        slope: Exact::Float(0.25),
    }
}

/// Plays built-in `method` against the explicit function, writing the transcript.
fn record(dir: &Path, method: &str, eps: f64) -> PathBuf {
    let class = class(eps);
    let wrapped = Class::FirstOrder(class.clone());
    let mut oracle = InstanceOracle::new(&class, function()).unwrap();
    let mut m = method::build(method, &wrapped, 0).unwrap();
    let header = Header {
        format: FORMAT_VERSION,
        tool: "naysayer tests/audit.rs".into(),
        class: wrapped,
        adversary: INSTANCE_NAME.into(),
        method: method.into(),
        seed: 0,
        budget: 100_000,
    };
    let path = dir.join(format!("{method}.jsonl"));
    let mut writer = TranscriptWriter::create(&path, Flush::Periodic).unwrap();
    let record = {
        let mut observers: Vec<&mut dyn Observer> = vec![&mut writer];
        game::play(
            &header,
            m.as_mut(),
            &mut oracle,
            &GameSettings { budget: 100_000 },
            &mut observers,
        )
        .unwrap()
    };
    assert!(
        record.certificate.is_none(),
        "a fixed function certifies nothing"
    );
    assert!(matches!(record.ending, Ending::Output { .. }));
    drop(writer);
    path
}

/// The number of queries `subgradient` plans at accuracy eps.
fn planned(eps: f64) -> u64 {
    method::subgradient::Subgradient::new(&class(eps), method::subgradient::StepRule::Fixed)
        .planned()
}

fn run(args: &[&str]) -> (Option<i32>, String) {
    let out = Command::new(BIN).args(args).output().unwrap();
    (
        out.status.code(),
        String::from_utf8(out.stdout).unwrap() + &String::from_utf8(out.stderr).unwrap(),
    )
}

fn records(path: &Path) -> Vec<Record> {
    TranscriptReader::open(path)
        .unwrap()
        .map(|r| r.unwrap().1)
        .collect()
}

/// The instance oracle answers f(y) exactly, and its subgradient g satisfies the
/// subgradient inequality f(z) >= f(y) + g.(z - y) exactly at many points z, for queries
/// in and outside the box, at the centre and on the kinks.
#[test]
fn the_instance_oracle_answers_exact_values_and_subgradients() {
    let class = class(1e-2);
    let w = function();
    let mut oracle = InstanceOracle::new(&class, w.clone()).unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    let mut queries: Vec<[f64; 2]> = vec![[0.375, -0.25], [0.375, 0.5], [1.0, -1.0], [5.0, -7.0]];
    queries.extend((0..60).map(|_| [rng.random_range(-1.5..1.5), rng.random_range(-1.5..1.5)]));
    let rat = |y: &[f64]| -> Vec<BigRational> { y.iter().map(|v| f64_to_rational(*v)).collect() };
    for y in &queries {
        let Answer::FirstOrder(a) = oracle.answer(y) else {
            panic!("first-order")
        };
        let fy = w.value_at(&rat(y));
        assert_eq!(a.value.to_rational(), fy, "value at {y:?}");
        let piece = AffinePiece::through(y, &a.value, &a.subgradient);
        for _ in 0..40 {
            let z = [rng.random_range(-2.0..2.0), rng.random_range(-2.0..2.0)];
            assert!(
                piece.value_at(&rat(&z)) <= w.value_at(&rat(&z)),
                "not a subgradient at {y:?} (fails at {z:?})"
            );
        }
    }
    // At the centre, 0 is a subgradient and the value is the minimum.
    let Answer::FirstOrder(a) = oracle.answer(&[0.375, -0.25]) else {
        panic!()
    };
    assert_eq!(a.value, Exact::Float(-0.25));
    assert!(oracle.gap_at(&[0.375, -0.25]).is_zero());
    assert!(oracle.witnesses().is_none());
    // A function outside the class is refused: a piece above the floor at the centre.
    let mut bad = function();
    bad.floor = Exact::Float(-0.5);
    assert!(InstanceOracle::new(&class, bad).is_err());
}

/// `subgradient` run on the explicit function: the audit finds the answers consistent
/// and reports eps_cert; asked to judge an accuracy just below eps_cert, it flags the
/// claim and writes two witness functions that the exact verifier confirms reproduce
/// every answer and have disjoint eps-solution sets.
#[test]
fn the_audit_of_a_subgradient_run_writes_witnesses_the_verifier_confirms() {
    let dir = tempfile::tempdir().unwrap();
    // eps = 0.1: the method plans ceil((sqrt(2) / 0.1)^2) queries (201 in f64).
    let path = record(dir.path(), "subgradient", 0.1);
    let t = planned(0.1);
    let found = audit::audit_file(&path, None)
        .unwrap()
        .expect("first-order");
    assert_eq!(found.queries as u64, t);
    assert_eq!(found.violation, None);
    let eps_cert = found.certified_uncertainty().expect("a certificate");
    assert!(eps_cert > 0.0 && eps_cert < 0.1, "eps_cert {eps_cert}");
    assert_eq!(found.claim, Claim::NotContradicted);

    let file = path.to_str().unwrap();
    let (code, out) = run(&["check", file]);
    assert_eq!(code, Some(0), "{out}");
    assert!(out.contains("valid certificate"), "{out}");
    assert!(
        out.contains("consistent with a convex L-Lipschitz function"),
        "{out}"
    );
    assert!(
        out.contains(&format!("audit uncertainty      {eps_cert:e}")),
        "{out}"
    );

    // Just below eps_cert: flagged, witnesses written.
    let eps = f64::from_bits(eps_cert.to_bits() - 1);
    let wpath = dir.path().join("witnesses.json");
    let (code, out) = run(&[
        "check",
        file,
        "--eps",
        &eps.to_string(),
        "--witnesses",
        wpath.to_str().unwrap(),
    ]);
    assert_eq!(code, Some(0), "{out}");
    assert!(out.contains("FLAGGED"), "{out}");
    let (code, out) = run(&["check", file, "--eps", &eps.to_string(), "--strict"]);
    assert_eq!(code, Some(1), "--strict fails on a flagged claim: {out}");
    let witnesses: WitnessFile =
        serde_json::from_str(&std::fs::read_to_string(&wpath).unwrap()).unwrap();
    assert_eq!(witnesses.queries, t);
    assert_eq!(witnesses.certificate.prefix, t);
    assert_eq!(witnesses.certificate.instances.len(), 2);

    // The verifier, on the same answers with the class's eps set to `eps` and no output
    // (so only disjoint eps-solution sets can make the certificate hold).
    let mut all = records(&path);
    let Some(Record::Header(header)) = all.first_mut() else {
        panic!("header")
    };
    header.class = Class::FirstOrder(class(eps));
    header.budget = t;
    all.pop();
    all.push(Record::Final(FinalRecord {
        queries_used: t,
        ending: Ending::BudgetExhausted,
        certificate: Some(witnesses.certificate.clone()),
        demonstration: None,
    }));
    let verdict = verify_records(&all).expect("the verifier confirms the witnesses");
    assert_eq!(verdict.certified_prefix, Some(t));
    assert!(verdict.certified_uncertainty.unwrap() >= eps);
    // And directly: sigma ||c_A - c_B||_inf > 2 eps, exactly.
    let fns: Vec<&FunctionWitness> = witnesses
        .certificate
        .instances
        .iter()
        .map(|w| match w {
            Witness::Function(f) => f,
            other => panic!("{}", other.label()),
        })
        .collect();
    let distance = fns[0]
        .center
        .iter()
        .zip(&fns[1].center)
        .map(|(a, b)| (a.to_rational() - b.to_rational()).abs())
        .max()
        .unwrap();
    assert!(
        distance * fns[0].slope.to_rational()
            > BigRational::from_integer(2.into()) * f64_to_rational(eps)
    );
}

/// Tampered answers: the audit names the first violating pair (1-based), or the first
/// answer whose subgradient is longer than L.
#[test]
fn the_audit_names_inconsistent_answers() {
    let dir = tempfile::tempdir().unwrap();
    let path = record(dir.path(), "subgradient", 0.1);
    let text = std::fs::read_to_string(&path).unwrap();
    let mut lines: Vec<serde_json::Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    // Lower the value of query 5 (line 6) by 1: earlier pieces now exceed it there.
    let v: Exact = serde_json::from_value(lines[5]["data"]["answer"]["value"].clone()).unwrap();
    lines[5]["data"]["answer"]["value"] =
        serde_json::to_value(Exact::Float(v.to_f64() - 1.0)).unwrap();
    let write = |name: &str, lines: &[serde_json::Value]| -> PathBuf {
        let p = dir.path().join(name);
        let text: Vec<String> = lines.iter().map(|l| l.to_string()).collect();
        std::fs::write(&p, text.join("\n") + "\n").unwrap();
        p
    };
    let tampered = write("pair.jsonl", &lines);
    let found = audit::audit_file(&tampered, None).unwrap().unwrap();
    let Some(Violation::Pair { piece, at }) = found.violation else {
        panic!("{:?}", found.violation)
    };
    assert_eq!(at, 5);
    assert!(piece != 5 && piece as u64 <= planned(0.1));
    assert!(found.certificate.is_none());
    let (code, out) = run(&["check", tampered.to_str().unwrap(), "--strict"]);
    assert_eq!(code, Some(1), "{out}");
    assert!(
        out.contains(&format!("INCONSISTENT: answers {piece} and 5")),
        "{out}"
    );
    // No certificate was claimed, so the verifier alone accepts it (exit 0 without
    // --strict), while the audit still reports the inconsistency.
    let (code, out) = run(&["check", tampered.to_str().unwrap()]);
    assert_eq!(code, Some(0), "{out}");
    assert!(out.contains("INCONSISTENT"), "{out}");

    // A subgradient of l2 norm 1.25 > L = 1 at query 3.
    let mut lines2: Vec<serde_json::Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    lines2[3]["data"]["answer"]["subgradient"] = serde_json::json!([0.75, 1.0]);
    let long = write("long.jsonl", &lines2);
    let found = audit::audit_file(&long, None).unwrap().unwrap();
    assert_eq!(
        found.violation,
        Some(Violation::LongSubgradient { query: 3 })
    );
}

/// `naysayer replay` end to end: a witness of an orthant certificate becomes a fixed
/// instance; the replay is deterministic (a regression test), its transcript passes
/// `naysayer check`, and while the replayed method asks the same queries as in the
/// original game the witness gives the same values (it reproduces the certified
/// answers exactly).
#[test]
fn replay_turns_a_certificate_witness_into_a_regression_test() {
    let dir = tempfile::tempdir().unwrap();
    let original = dir.path().join("orthant.jsonl");
    let (code, out) = run(&[
        "play",
        "--class",
        "first-order",
        "-m",
        "ellipsoid",
        "-d",
        "2",
        "--eps",
        "1e-3",
        "--budget",
        "40",
        "-t",
        original.to_str().unwrap(),
    ]);
    assert_eq!(code, Some(0), "{out}");
    let first = dir.path().join("replay1.jsonl");
    let second = dir.path().join("replay2.jsonl");
    for out_path in [&first, &second] {
        let (code, out) = run(&[
            "replay",
            "--from",
            original.to_str().unwrap(),
            "--witness",
            "2",
            "-m",
            "ellipsoid",
            "-t",
            out_path.to_str().unwrap(),
        ]);
        assert_eq!(code, Some(0), "{out}");
        assert!(out.contains("gap f(x) - min f"), "{out}");
        assert!(out.contains("within eps = 0.001"), "{out}");
    }
    assert_eq!(
        std::fs::read_to_string(&first).unwrap(),
        std::fs::read_to_string(&second).unwrap(),
        "replays are byte-identical"
    );
    let (code, out) = run(&["check", first.to_str().unwrap()]);
    assert_eq!(code, Some(0), "{out}");
    assert!(out.contains("against adversary instance"), "{out}");
    assert!(out.contains("consistent with a convex"), "{out}");

    let orig = records(&original);
    let replayed = records(&first);
    let prefix = match orig.last() {
        Some(Record::Final(f)) => f.certificate.as_ref().unwrap().prefix as usize,
        _ => panic!("final record"),
    };
    let mut same = 0;
    for (a, b) in orig.iter().zip(&replayed).skip(1).take(prefix) {
        let (Record::Query(a), Record::Query(b)) = (a, b) else {
            break;
        };
        if a.point != b.point {
            break;
        }
        let (Answer::FirstOrder(fa), Answer::FirstOrder(fb)) = (&a.answer, &b.answer) else {
            panic!("first-order")
        };
        assert_eq!(fa.value, fb.value, "query {}", a.index);
        same += 1;
    }
    assert!(same >= 1, "the first query (the box centre) is shared");

    // The library gives the same exact gap; a missing witness is bad input (exit 2).
    let (class, witness) =
        naysayer::cli::replay::load_witness(Some(original.as_path()), None, 2).unwrap();
    let report =
        naysayer::cli::replay::replay(&class, witness, "ellipsoid", 0, 1_000_000, None).unwrap();
    assert_eq!(report.accurate(), Some(true));
    let (code, out) = run(&[
        "replay",
        "--from",
        original.to_str().unwrap(),
        "--witness",
        "3",
        "-m",
        "ellipsoid",
    ]);
    assert_eq!(code, Some(2), "{out}");
    assert!(out.contains("witness 3 does not exist"), "{out}");
}

/// The audit's witness file replays too, and the game is played in memory when no
/// transcript is asked for.
#[test]
fn replay_reads_an_audit_witness_file() {
    let dir = tempfile::tempdir().unwrap();
    let path = record(dir.path(), "subgradient", 0.1);
    let wpath = dir.path().join("w.json");
    let (code, out) = run(&[
        "check",
        path.to_str().unwrap(),
        "--witnesses",
        wpath.to_str().unwrap(),
    ]);
    assert_eq!(code, Some(0), "{out}");
    let (code, out) = run(&[
        "replay",
        "--witnesses",
        wpath.to_str().unwrap(),
        "--witness",
        "1",
        "-m",
        "subgradient",
        "--eps",
        "0.2",
    ]);
    assert_eq!(code, Some(0), "{out}");
    let t = planned(0.2);
    assert!(
        out.contains(&format!("queries used           {t}")),
        "{out}"
    );
    assert!(out.contains("gap f(x) - min f"), "{out}");
    // The memory path of the library agrees with the printed verdict.
    let (class, w) = naysayer::cli::replay::load_witness(None, Some(wpath.as_path()), 1).unwrap();
    let class = FirstOrderClass { eps: 0.2, ..class };
    let report = naysayer::cli::replay::replay(&class, w, "subgradient", 0, 1000, None).unwrap();
    assert_eq!(report.record.queries_used, t);
    let verdict = if report.accurate().unwrap() {
        "within"
    } else {
        "NOT within"
    };
    assert!(out.contains(verdict), "{out}");
}
