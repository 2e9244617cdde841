//! Tampered first-order transcripts (issue 5): `verify_file` and `naysayer check` must
//! reject each one with an error naming the offending line (exit code 1), and accept the
//! untampered transcript and each tampering taken exactly to its boundary (exit code 0).
//! Every boundary is exact: the rejected versions differ from the accepted ones by
//! amounts far below f64 resolution, written as exact rationals.
//!
//! The original comes from `naysayer play --class first-order -m ellipsoid -d 2
//! --eps 1e-3 --budget 40 -t FILE` (ellipsoid against `orthant`): line 1 is the header,
//! line n + 1 holds query n, the last line the final record, whose two function
//! witnesses certify a prefix shorter than the game.

use std::path::{Path, PathBuf};
use std::process::Command;

use num_rational::BigRational;
use num_traits::{One, Signed, Zero};
use serde_json::{json, Value};
use tempfile::TempDir;

use naysayer::certificate::universal::{first_inconsistent_pair, Exchange};
use naysayer::certificate::verify_file;
use naysayer::exact::{f64_to_rational, parse_rational, Exact};
use naysayer::instance::{AffinePiece, FunctionWitness, Witness};
use naysayer::Error;

const BIN: &str = env!("CARGO_BIN_EXE_naysayer");

struct Fixture {
    dir: TempDir,
    lines: Vec<String>,
    /// Queries used.
    queries: usize,
    /// The certified prefix T*.
    prefix: usize,
    eps: BigRational,
    lipschitz: f64,
}

impl Fixture {
    fn new() -> Fixture {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("original.jsonl");
        let out = Command::new(BIN)
            .args([
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
            ])
            .arg(&path)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(0), "play failed: {out:?}");
        let text = std::fs::read_to_string(&path).unwrap();
        let lines: Vec<String> = text.lines().map(str::to_string).collect();
        let last: Value = serde_json::from_str(lines.last().unwrap()).unwrap();
        let header: Value = serde_json::from_str(&lines[0]).unwrap();
        let queries = last["data"]["queries_used"].as_u64().unwrap() as usize;
        let prefix = last["data"]["certificate"]["prefix"].as_u64().unwrap() as usize;
        assert_eq!(lines.len(), queries + 2);
        // The tests below need answers inside and after the certified prefix.
        assert!(
            prefix >= 3 && prefix < queries,
            "prefix {prefix} of {queries}"
        );
        Fixture {
            dir,
            lines,
            queries,
            prefix,
            eps: f64_to_rational(header["data"]["class"]["eps"].as_f64().unwrap()),
            lipschitz: header["data"]["class"]["lipschitz"].as_f64().unwrap(),
        }
    }

    /// Line `n` (1-based) as JSON.
    fn value(&self, n: usize) -> Value {
        serde_json::from_str(&self.lines[n - 1]).unwrap()
    }

    fn final_line(&self) -> usize {
        self.lines.len()
    }

    /// The exchange of query `q` (1-based), read back from its line.
    fn exchange(&self, q: usize) -> Exchange {
        let data = &self.value(q + 1)["data"];
        Exchange {
            point: serde_json::from_value(data["point"].clone()).unwrap(),
            value: serde_json::from_value(data["answer"]["value"].clone()).unwrap(),
            gradient: serde_json::from_value(data["answer"]["subgradient"].clone()).unwrap(),
        }
    }

    /// The witnesses of the final record.
    fn witnesses(&self) -> Vec<FunctionWitness> {
        let last = self.value(self.final_line());
        last["data"]["certificate"]["instances"]
            .as_array()
            .unwrap()
            .iter()
            .map(|w| {
                assert_eq!(w["kind"], "function");
                serde_json::from_value(w.clone()).unwrap()
            })
            .collect()
    }

    /// A copy with the given lines replaced.
    fn write(&self, name: &str, edits: &[(usize, Value)]) -> PathBuf {
        let mut lines = self.lines.clone();
        for (n, v) in edits {
            lines[n - 1] = serde_json::to_string(v).unwrap();
        }
        let path = self.dir.path().join(name);
        let mut text = lines.join("\n");
        text.push('\n');
        std::fs::write(&path, text).unwrap();
        path
    }

    /// The final record with witness `k` replaced.
    fn final_with(&self, replaced: &[(usize, FunctionWitness)]) -> Value {
        let mut last = self.value(self.final_line());
        for (k, w) in replaced {
            last["data"]["certificate"]["instances"][*k] =
                serde_json::to_value(Witness::Function(w.clone())).unwrap();
        }
        last
    }
}

fn exact_json(r: &BigRational) -> Value {
    serde_json::to_value(Exact::from_rational(r.clone())).unwrap()
}

/// A positive amount no f64 sum could see: 1 / (3 * 2^100).
fn tiny() -> BigRational {
    parse_rational(&format!("1/{}", 3u128 << 100)).unwrap()
}

fn piece_at(piece: &AffinePiece, x: &[f64]) -> BigRational {
    let xr: Vec<BigRational> = x.iter().map(|v| f64_to_rational(*v)).collect();
    piece.value_at(&xr)
}

/// Runs `naysayer check FILE`: (exit code, stdout).
fn check(path: &Path) -> (Option<i32>, String) {
    let out = Command::new(BIN).arg("check").arg(path).output().unwrap();
    (
        out.status.code(),
        String::from_utf8(out.stdout).expect("utf-8 output"),
    )
}

/// Both verifiers accept `path`.
fn assert_accepted(path: &Path) {
    if let Err(e) = verify_file(path) {
        panic!("verify_file should accept {}: {e}", path.display());
    }
    let (code, stdout) = check(path);
    assert_eq!(code, Some(0), "check should accept: {stdout}");
    assert!(stdout.contains("valid certificate"), "{stdout}");
}

/// Both verifiers reject `path` naming line `line`; returns the library's reason.
fn assert_rejected_at(path: &Path, line: usize) -> String {
    let reason = match verify_file(path) {
        Err(Error::Transcript { line: got, reason }) => {
            assert_eq!(
                got, line as u64,
                "verify_file blamed the wrong line: {reason}"
            );
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

#[test]
fn the_original_first_order_transcript_is_accepted() {
    let fx = Fixture::new();
    let path = fx.write("copy.jsonl", &[]);
    assert_accepted(&path);
    let exchanges: Vec<Exchange> = (1..=fx.queries).map(|q| fx.exchange(q)).collect();
    assert_eq!(first_inconsistent_pair(&exchanges), None);
}

/// One answered value lowered by its exact slack delta (the smallest gap to another
/// answer's piece at that query) stays consistent; lowered by delta + 1/(3 2^100) it
/// makes exactly that pair inconsistent. The witnesses are updated to carry the new
/// piece, so the only fault is the inconsistent pair, and the verifier names the line.
#[test]
fn a_value_lowered_past_its_exact_slack_is_rejected_at_its_line() {
    let fx = Fixture::new();
    let exchanges: Vec<Exchange> = (1..=fx.prefix).map(|q| fx.exchange(q)).collect();
    let pieces: Vec<AffinePiece> = exchanges
        .iter()
        .map(|e| AffinePiece::through(&e.point, &e.value, &e.gradient))
        .collect();
    let witnesses = fx.witnesses();
    // Candidates: answers in the prefix whose piece no other answer shares, with their
    // slack delta_t = v_t - max_{s != t} piece_s(x_t) and the cones' slack there.
    let mut best: Option<(usize, BigRational, usize)> = None;
    for t in 0..fx.prefix {
        if (0..fx.prefix).any(|s| s != t && pieces[s] == pieces[t]) {
            continue;
        }
        let v = exchanges[t].value.to_rational();
        let (s, top) = (0..fx.prefix)
            .filter(|s| *s != t)
            .map(|s| (s, piece_at(&pieces[s], &exchanges[t].point)))
            .max_by(|a, b| a.1.cmp(&b.1))
            .unwrap();
        let delta = &v - top;
        assert!(!delta.is_negative(), "the original is consistent");
        let xr: Vec<BigRational> = exchanges[t]
            .point
            .iter()
            .map(|v| f64_to_rational(*v))
            .collect();
        let cone_slack = witnesses
            .iter()
            .map(|w| &v - (w.floor.to_rational() + w.slope.to_rational() * w.center_distance(&xr)))
            .min()
            .unwrap();
        if cone_slack > &delta + tiny() && best.as_ref().is_none_or(|(_, d, _)| delta < *d) {
            best = Some((t, delta, s));
        }
    }
    let (t, delta, s) = best.expect("an answer with a unique piece and cone room");
    let line = t + 2;
    let make = |name: &str, lowered: &BigRational| -> PathBuf {
        let v = exchanges[t].value.to_rational() - lowered;
        let mut query = fx.value(line);
        query["data"]["answer"]["value"] = exact_json(&v);
        let new_piece = AffinePiece::through(
            &exchanges[t].point,
            &Exact::from_rational(v.clone()),
            &exchanges[t].gradient,
        );
        let replaced: Vec<(usize, FunctionWitness)> = witnesses
            .iter()
            .enumerate()
            .map(|(k, w)| {
                let mut w = w.clone();
                let slot = w.pieces.iter().position(|p| *p == pieces[t]).unwrap();
                w.pieces[slot] = new_piece.clone();
                (k, w)
            })
            .collect();
        fx.write(
            name,
            &[(line, query), (fx.final_line(), fx.final_with(&replaced))],
        )
    };
    // At the boundary: still consistent, still certified.
    assert_accepted(&make("boundary.jsonl", &delta));
    // Past it by 1/(3 2^100): answer s's piece now exceeds v_t at x_t.
    let path = make("past.jsonl", &(&delta + tiny()));
    let reason = assert_rejected_at(&path, line);
    assert!(reason.contains("exceeds the answered value"), "{reason}");
    assert!(reason.contains(&format!("answer {}", t + 1)), "{reason}");
    let mut tampered = exchanges.clone();
    tampered[t].value = Exact::from_rational(exchanges[t].value.to_rational() - delta - tiny());
    // The first violating pair is (s', t) with piece s' as high as piece s at x_t.
    let (s2, t2) = first_inconsistent_pair(&tampered).expect("an inconsistent pair");
    assert_eq!(t2, t);
    let x = &exchanges[t].point;
    assert_eq!(piece_at(&pieces[s2], x), piece_at(&pieces[s], x));
}

/// A subgradient (L, L 2^-30) in the l2 class with L = 1: its norm exceeds L by a
/// relative 2^-61, invisible in f64 (sqrt rounds to 1), and the verifier rejects it at
/// its line; (L, 0) on the boundary is accepted. The answer lies after the certified
/// prefix, so only the Lipschitz check applies to it.
#[test]
fn a_subgradient_longer_than_l_is_rejected_at_its_line() {
    let fx = Fixture::new();
    let l = fx.lipschitz;
    let long = [l, l * 2f64.powi(-30)];
    assert_eq!(long[0].hypot(long[1]), l, "f64 cannot see the excess");
    let q = fx.prefix + 1;
    let line = q + 1;
    for (name, g, accepted) in [
        ("boundary.jsonl", [l, 0.0], true),
        ("long.jsonl", long, false),
    ] {
        let mut query = fx.value(line);
        query["data"]["answer"]["subgradient"] = json!(g);
        let path = fx.write(name, &[(line, query)]);
        if accepted {
            assert_accepted(&path);
        } else {
            let reason = assert_rejected_at(&path, line);
            assert!(reason.contains("longer than L"), "{reason}");
        }
    }
}

/// Witness B's centre moved along the segment towards A's until ||c_A - c_B||_inf is
/// exactly 2 eps / sigma (its floor moved the same way, so B still reproduces every
/// answer: the admissible set is convex). The eps-solution boxes then touch, so the
/// certificate proves nothing and the verifier rejects it at the final record; a
/// distance larger by 1/(3 2^100) times that is accepted.
#[test]
fn witness_centres_exactly_two_eps_over_sigma_apart_are_rejected() {
    let fx = Fixture::new();
    let witnesses = fx.witnesses();
    let (a, b) = (&witnesses[0], &witnesses[1]);
    assert_eq!(a.slope, b.slope);
    let sigma = a.slope.to_rational();
    let distance = a
        .center
        .iter()
        .zip(&b.center)
        .map(|(x, y)| (x.to_rational() - y.to_rational()).abs())
        .max()
        .unwrap();
    let two = BigRational::from_integer(2.into());
    let target = &two * &fx.eps / &sigma;
    assert!(distance > target, "the original separates");
    let make = |name: &str, lambda: &BigRational| -> PathBuf {
        let one = BigRational::one();
        let mut moved = b.clone();
        moved.center = a
            .center
            .iter()
            .zip(&b.center)
            .map(|(ca, cb)| {
                let (ca, cb) = (ca.to_rational(), cb.to_rational());
                Exact::from_rational(&ca + lambda * (cb - &ca))
            })
            .collect();
        moved.floor = Exact::from_rational(
            (&one - lambda) * a.floor.to_rational() + lambda * b.floor.to_rational(),
        );
        fx.write(name, &[(fx.final_line(), fx.final_with(&[(1, moved)]))])
    };
    let lambda = &target / &distance;
    assert!(lambda > BigRational::zero() && lambda < BigRational::one());
    let path = make("touching.jsonl", &lambda);
    let reason = assert_rejected_at(&path, fx.final_line());
    assert!(reason.contains("not pairwise disjoint"), "{reason}");
    assert_accepted(&make(
        "apart.jsonl",
        &(&lambda * (BigRational::one() + tiny())),
    ));
}

/// Witness A's floor lowered to M(c_A) - 1/(3 2^100), where M is the max of its pieces:
/// a piece then lies above the floor at the centre, so the minimum is not at the centre
/// and the verifier rejects the witness at the final record. With the floor exactly
/// M(c_A) it is accepted.
#[test]
fn a_witness_with_a_piece_above_its_floor_at_the_centre_is_rejected() {
    let fx = Fixture::new();
    let witnesses = fx.witnesses();
    let a = &witnesses[0];
    let centre: Vec<BigRational> = a.center.iter().map(Exact::to_rational).collect();
    let top = a.pieces.iter().map(|p| p.value_at(&centre)).max().unwrap();
    assert!(
        top <= a.floor.to_rational(),
        "the original has its minimum at the centre"
    );
    for (name, floor, accepted) in [
        ("floor_at_max.jsonl", top.clone(), true),
        ("floor_below.jsonl", &top - tiny(), false),
    ] {
        let mut w = a.clone();
        w.floor = Exact::from_rational(floor);
        let path = fx.write(name, &[(fx.final_line(), fx.final_with(&[(0, w)]))]);
        if accepted {
            assert_accepted(&path);
        } else {
            let reason = assert_rejected_at(&path, fx.final_line());
            assert!(reason.contains("witness #1"), "{reason}");
            assert!(
                reason.contains("exceeds the floor at the centre"),
                "{reason}"
            );
        }
    }
}

/// Regression for a once non-monotone certificate search: with the two answers below
/// (d = 1, eps = 1e-2; Kelley's first two queries against `orthant`) no certificate was
/// found for the first answer alone although every centre in [0, 1] is admissible by
/// hand (the first answer says only f(0) = 0 with slope -1), so the prefix search stopped
/// at the empty prefix. Existence is monotone in the prefix: both prefixes must certify.
#[test]
fn the_first_answer_alone_is_certified_when_two_are() {
    use naysayer::certificate::universal::{certificate_for, longest_certificate};
    use naysayer::class::{FirstOrderClass, LipschitzNorm};
    let class = FirstOrderClass::new(1, 1.0, 1e-2, 1.0, LipschitzNorm::L2).unwrap();
    let exact = |v: f64| Exact::from_f64(v).unwrap();
    let first = Exchange {
        point: vec![0.0],
        value: exact(0.0),
        gradient: vec![exact(-1.0)],
    };
    let second = Exchange {
        point: vec![0.999_999_999_999_790_4],
        value: exact(-0.125),
        gradient: vec![exact(0.25)],
    };
    let both = [first.clone(), second];
    let one = certificate_for(&class, &both[..1], false).unwrap();
    assert!(one.is_some(), "no certificate for the first answer alone");
    let two = certificate_for(&class, &both, false).unwrap();
    assert!(two.is_some(), "no certificate for both answers");
    let longest = longest_certificate(&class, &both).unwrap().unwrap();
    assert_eq!(longest.witnesses.prefix, 2);
}
