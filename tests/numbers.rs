//! One reading of every number, in both checkers (issue 15, item 2): a plain JSON
//! number is exactly the f64 it parses to, whatever its spelling; an exact number has
//! one grammar and size limits; integer fields take integer tokens only; no object
//! repeats a key; a final record (and a lattice hull) must hold its optional key
//! explicitly. Every case is judged the same by `naysayer`'s verifier and by
//! `tools/check_certificate.py`.

use std::path::PathBuf;

use naysayer::certificate::verify_file;
use tempfile::TempDir;

mod common;
mod outside;
use common::{agree, both_reject, python_present, write_lines};

const CLASS: &str =
    r#"{"kind":"feasibility","dim":1,"half_width":1e17,"rho":0.5,"promise":"may-be-empty"}"#;

/// A one-query transcript: the query `point`, the cut {y < offset}, witnesses
/// [empty, ball(center, 0.5)] for the whole game, the budget ending it.
fn game(point: &str, offset: &str, center: &str) -> Vec<String> {
    vec![
        format!(
            r#"{{"type":"header","data":{{"format":1,"tool":"test","class":{CLASS},"adversary":"hand","method":"hand","seed":0,"budget":1}}}}"#
        ),
        format!(
            r#"{{"type":"query","data":{{"index":1,"point":[{point}],"answer":{{"kind":"cut","normal":{{"axis":0,"sign":1}},"offset":{offset}}}}}}}"#
        ),
        format!(
            r#"{{"type":"final","data":{{"queries_used":1,"ending":{{"kind":"budget-exhausted"}},"certificate":{{"schema":1,"prefix":1,"instances":[{{"kind":"empty"}},{{"kind":"ball","center":[{center}],"radius":0.5}}]}}}}}}"#
        ),
    ]
}

struct Files {
    dir: TempDir,
    count: usize,
}

impl Files {
    fn new() -> Files {
        Files {
            dir: TempDir::new().unwrap(),
            count: 0,
        }
    }

    fn write(&mut self, lines: &[String]) -> PathBuf {
        self.count += 1;
        write_lines(
            self.dir.path(),
            &format!("case-{}.jsonl", self.count),
            lines,
        )
    }

    fn valid(&mut self, lines: &[String]) {
        let path = self.write(lines);
        if let Err(e) = verify_file(&path) {
            panic!("Rust rejects {lines:?}: {e}");
        }
        if python_present() {
            assert!(agree(&path), "{lines:?}");
        }
    }

    fn rejected(&mut self, lines: &[String]) -> String {
        let path = self.write(lines);
        if python_present() {
            both_reject(&path).0
        } else {
            verify_file(&path).expect_err("Rust accepts it").to_string()
        }
    }
}

#[test]
fn the_control_game_is_valid() {
    Files::new().valid(&game("9007199254740994", "9007199254740992", "0"));
}

/// 2^53 + 1 has no f64: the token 9007199254740993 is the f64 2^53 in every field. Read
/// exactly, the offset would be 2^53 + 1 and the ball B(2^53, 0.5) strictly inside the
/// cut; read as the f64 it is, the offset is 2^53, the ball touches the cut, and the
/// claim is false. Before the rule, both checkers accepted it.
#[test]
fn an_integer_token_beyond_two_to_the_53_is_the_f64_it_parses_to() {
    let mut files = Files::new();
    files.rejected(&game(
        "9007199254740994",
        "9007199254740993",
        "9007199254740992",
    ));
    // Written as the exact number it was meant to be, the claim holds.
    let exact = r#"{"exact":"9007199254740993","approx":9007199254740992.0}"#;
    files.valid(&game("9007199254740994", exact, "9007199254740992"));
    // The same token in a point: the query 2^53 lies exactly on its cut {y < 2^53}.
    files.valid(&game("9007199254740993", "9007199254740992", "0"));
    // A long integer token beyond u64 is a plain number too.
    files.valid(
        &game("1e16", "10000000000000000000000", "0")
            .iter()
            .map(|l| l.replace(r#""point":[1e16]"#, r#""point":[100000000000000000000000]"#))
            .collect::<Vec<_>>(),
    );
}

#[test]
fn exact_text_has_one_grammar() {
    let mut files = Files::new();
    let with = |exact: &str, approx: &str| {
        game(
            "1",
            &format!(r#"{{"exact":"{exact}","approx":{approx}}}"#),
            "-1",
        )
    };
    files.valid(&with("1/3", "0.3333333333333333"));
    files.valid(&with("-000/7", "0.0"));
    files.valid(&with("2/6", "0.3333333333333333"));
    for bad in [
        "1/3 ",
        " 1/3",
        "+1/3",
        "1_0/3",
        "1e1/3",
        "1/3e0",
        "1.5",
        "0x10",
        "",
        "-",
        "--1/3",
        "1/-3",
        "1//3",
        "1/0",
        "1/00",
        "1/",
        "/3",
        "\u{0661}/3",
        "1/\u{0663}",
        "\u{ff11}",
    ] {
        let reason = files.rejected(&with(bad, "0.3333333333333333"));
        assert!(
            reason.contains("digits") || reason.contains("zero"),
            "{bad:?}: {reason}"
        );
    }
    // `approx` is a plain number: any spelling of the nearest f64 will do.
    files.valid(&with(
        "1/3",
        "0.3333333333333333148296162562473909929394721984863281250000001",
    ));
    // A wrong approximation, and keys other than exactly `exact` and `approx`.
    files.rejected(&with("1/3", "0.33333333333333337"));
    files.rejected(&game("1", r#"{"exact":"1/3"}"#, "-1"));
    files.rejected(&game(
        "1",
        r#"{"exact":"1/3","approx":0.3333333333333333,"note":1}"#,
        "-1",
    ));
    files.rejected(&game("1", r#"{"exact":1,"approx":1.0}"#, "-1"));
}

#[test]
fn exact_numbers_have_size_limits() {
    let mut files = Files::new();
    let with = |exact: String, approx: &str| {
        game(
            "1",
            &format!(r#"{{"exact":"{exact}","approx":{approx}}}"#),
            "-1",
        )
    };
    // 4096 digits above and below the bar: read; 4097: refused.
    let third = format!("{}/3{}", "1".repeat(4096), "0".repeat(4095));
    files.valid(&with(third, "0.37037037037037035"));
    let long = format!("{}/3{}", "1".repeat(4097), "0".repeat(4096));
    let reason = files.rejected(&with(long, "0.37037037037037035"));
    assert!(reason.contains("4096"), "{reason}");
    // Magnitude: below 2^1024 - 2^970 the nearest f64 is f64::MAX; from it on, infinity.
    let bound = (num_bigint::BigInt::from(1) << 1024u32) - (num_bigint::BigInt::from(1) << 970u32);
    let below = (&bound - num_bigint::BigInt::from(1)).to_string();
    // (Such a cut keeps no point of the box, so the witnesses certify prefix 0 only.)
    let prefix_zero = |lines: Vec<String>| -> Vec<String> {
        lines
            .iter()
            .map(|l| l.replace(r#""prefix":1"#, r#""prefix":0"#))
            .collect()
    };
    files.valid(&prefix_zero(with(
        format!("-{below}"),
        "-1.7976931348623157e308",
    )));
    let reason = files.rejected(&with(format!("-{bound}"), "-1.7976931348623157e308"));
    assert!(reason.contains("2^1024"), "{reason}");
}

#[test]
fn integer_fields_take_integer_tokens_only() {
    let mut files = Files::new();
    let base = game("1", "0.5", "-1");
    for (from, to) in [
        (r#""index":1"#, r#""index":1.0"#),
        (r#""index":1"#, r#""index":1e0"#),
        (r#""index":1"#, r#""index":-0"#),
        (r#""sign":1"#, r#""sign":1.0"#),
        (r#""axis":0"#, r#""axis":-0"#),
        (r#""queries_used":1"#, r#""queries_used":1.0"#),
        (r#""prefix":1"#, r#""prefix":1e0"#),
        (r#""format":1"#, r#""format":1.0"#),
        (r#""budget":1"#, r#""budget":18446744073709551616"#),
        (r#""seed":0"#, r#""seed":-1"#),
        (r#""dim":1"#, r#""dim":1.0"#),
    ] {
        let line = if from.contains("format")
            || from.contains("budget")
            || from.contains("seed")
            || from.contains("dim")
        {
            0
        } else if from.contains("index") || from.contains("sign") || from.contains("axis") {
            1
        } else {
            2
        };
        let mut lines = base.clone();
        assert!(lines[line].contains(from), "{from}");
        lines[line] = lines[line].replacen(from, to, 1);
        files.rejected(&lines);
    }
    // The largest seed and budget a u64 holds are whole numbers.
    let mut lines = base.clone();
    lines[0] = lines[0].replace(r#""seed":0"#, r#""seed":18446744073709551615"#);
    files.valid(&lines);
}

#[test]
fn no_object_repeats_a_key() {
    let mut files = Files::new();
    let base = game("1", r#"{"exact":"1/3","approx":0.3333333333333333}"#, "-1");
    for (line, from, to) in [
        (
            0,
            r#"{"type":"header","#,
            r#"{"type":"header","type":"header","#,
        ),
        (0, r#""format":1,"#, r#""format":1,"format":1,"#),
        (0, r#""dim":1,"#, r#""dim":1,"dim":1,"#),
        (0, r#""seed":0,"#, r#""seed":0,"junk":1,"junk":1,"#),
        (1, r#""index":1,"#, r#""index":1,"index":1,"#),
        (1, r#""exact":"1/3","#, r#""exact":"1/3","exact":"1/3","#),
        (
            1,
            r#""approx":0.3333333333333333"#,
            r#""approx":0.3333333333333333,"approx":0.3333333333333333"#,
        ),
        (1, r#""axis":0,"#, r#""axis":0,"axis":0,"#),
        (2, r#""radius":0.5"#, r#""radius":0.5,"radius":0.5"#),
        (2, r#""prefix":1,"#, r#""prefix":1,"prefix":1,"#),
        (
            2,
            r#""queries_used":1,"#,
            r#""queries_used":1,"queries_used":1,"#,
        ),
        (
            2,
            r#""queries_used":1,"#,
            r#""queries_used":1,"q\u0075eries_used":1,"#,
        ),
    ] {
        let mut lines = base.clone();
        assert!(lines[line].contains(from), "{from}");
        lines[line] = lines[line].replacen(from, to, 1);
        let reason = files.rejected(&lines);
        assert!(
            reason.contains("repeats") || reason.contains("duplicate"),
            "{to}: {reason}"
        );
    }
}

#[test]
fn optional_keys_must_be_written() {
    let mut files = Files::new();
    let mut lines = game("1", "0.5", "-1");
    files.valid(&lines);
    // A final record without `certificate` (rather than `"certificate":null`).
    let start = lines[2].find(r#","certificate""#).unwrap();
    lines[2] = format!("{}}}}}", &lines[2][..start]);
    assert!(!lines[2].contains("certificate"));
    let reason = files.rejected(&lines);
    assert!(reason.contains("certificate"), "{reason}");
    lines[2] = lines[2].replace(
        r#""budget-exhausted"}"#,
        r#""budget-exhausted"},"certificate":null"#,
    );
    files.valid(&lines);
    // A lattice hull without `fibre` (rather than `"fibre":null`).
    let class =
        r#"{"kind":"lattice","lower":[0],"upper":[1],"cont_dim":0,"half_width":1.0,"rho":0.5}"#;
    let lattice = |hull: &str| {
        vec![
            format!(
                r#"{{"type":"header","data":{{"format":1,"tool":"test","class":{class},"adversary":"hand","method":"hand","seed":0,"budget":0}}}}"#
            ),
            format!(
                r#"{{"type":"final","data":{{"queries_used":0,"ending":{{"kind":"budget-exhausted"}},"certificate":{{"schema":1,"prefix":0,"instances":[{hull},{{"kind":"lattice-hull","points":[],"fibre":{{"integer":[1],"center":[],"radius":0.5}}}}]}}}}}}"#
            ),
        ]
    };
    files.valid(&lattice(
        r#"{"kind":"lattice-hull","points":[],"fibre":null}"#,
    ));
    let reason = files.rejected(&lattice(r#"{"kind":"lattice-hull","points":[]}"#));
    assert!(reason.contains("fibre"), "{reason}");
}

#[test]
fn strings_must_be_valid_unicode() {
    let mut files = Files::new();
    let mut lines = game("1", "0.5", "-1");
    lines[0] = lines[0].replace(r#""tool":"test""#, r#""tool":"\ud800""#);
    files.rejected(&lines);
    // A surrogate pair is one character, and fine.
    lines[0] = lines[0].replace(r#""tool":"\ud800""#, r#""tool":"\ud83d\ude00""#);
    files.valid(&lines);
}
