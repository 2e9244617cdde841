//! Criterion benchmark of the external-method line protocol.
//!
//! Target (issue 4): protocol round trips with a compiled child method at d = 10 reach
//! at least half the rate of a bare pipe ping-pong between two processes, measured in
//! the same benchmark. Both children are this benchmark binary itself, started again
//! with `--naysayer-bench-child echo` (reads a line, writes it back) or
//! `--naysayer-bench-child midpoint` (serves the built-in midpoint method over the
//! protocol with `method::external::serve`, as `examples/protocol_method.rs` does).
//! Figures measured on the project's 2-core machine go in DEVELOPERS.md.

use std::io::{BufRead, BufReader, BufWriter, Write};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use criterion::{black_box, Criterion, Throughput};
use naysayer::adversary::{Adversary, Halving};
use naysayer::class::{Class, FeasibilityClass, Promise};
use naysayer::game::{self, GameSettings, Observer};
use naysayer::method::external::{self, ExternalMethod, ExternalSettings};
use naysayer::method::{self as methods};
use naysayer::oracle::Answer;
use naysayer::transcript::FORMAT_VERSION;
use naysayer::transcript::{FinalRecord, Header};

const CHILD_FLAG: &str = "--naysayer-bench-child";

/// Round trips per measured iteration of the ping-pong.
const PING_PONGS: u64 = 10_000;

fn child(kind: &str) {
    let stdin = std::io::stdin().lock();
    let stdout = std::io::stdout().lock();
    match kind {
        "echo" => {
            let mut input = BufReader::new(stdin);
            let mut output = BufWriter::new(stdout);
            let mut line = String::new();
            loop {
                line.clear();
                if input.read_line(&mut line).unwrap_or(0) == 0 {
                    return;
                }
                if output
                    .write_all(line.as_bytes())
                    .and_then(|_| output.flush())
                    .is_err()
                {
                    return;
                }
            }
        }
        name => {
            let result = external::serve(
                |class, seed| methods::build(name, class, seed),
                BufReader::new(stdin),
                BufWriter::new(stdout),
            );
            if let Err(e) = result {
                eprintln!("bench child: {e}");
                std::process::exit(1);
            }
        }
    }
}

/// A bare pipe ping-pong: one short line there and back.
fn ping_pong(c: &mut Criterion) {
    let exe = std::env::current_exe().unwrap();
    let mut echo = Command::new(&exe)
        .args([CHILD_FLAG, "echo"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .unwrap();
    let mut to_child = echo.stdin.take().unwrap();
    let mut from_child = BufReader::new(echo.stdout.take().unwrap());
    let mut group = c.benchmark_group("pipe_round_trips");
    group.throughput(Throughput::Elements(PING_PONGS));
    group.bench_function("bare ping-pong", |b| {
        let mut line = String::new();
        b.iter(|| {
            for _ in 0..PING_PONGS {
                to_child.write_all(b"ping\n").unwrap();
                to_child.flush().unwrap();
                line.clear();
                from_child.read_line(&mut line).unwrap();
            }
            black_box(line.len())
        })
    });
    group.finish();
    drop(to_child);
    let _ = echo.wait();
}

/// Times the game from the first answered query to the end (start-up excluded).
#[derive(Default)]
struct Stopwatch {
    first: Option<Instant>,
    elapsed: Duration,
}

impl Observer for Stopwatch {
    fn on_query(
        &mut self,
        _index: u64,
        _query: &[f64],
        _answer: &Answer,
        _adversary: &dyn Adversary,
    ) -> Result<(), naysayer::Error> {
        self.first.get_or_insert_with(Instant::now);
        Ok(())
    }

    fn on_finish(&mut self, _record: &FinalRecord) -> Result<(), naysayer::Error> {
        if let Some(first) = self.first {
            self.elapsed = first.elapsed();
        }
        Ok(())
    }
}

/// Midpoint (served by a child process) against halving, d = 10, R/rho = 1e14:
/// 10 k + 1 = 461 protocol round trips per game (k = 46; a larger R/rho would take the
/// box below the f64 resolution near its corner). Measured twice: whole games with the
/// child's start-up, and the round trips alone (from the first answer to the end).
fn protocol_game(c: &mut Criterion) {
    let exe = std::env::current_exe().unwrap();
    let command = vec![
        exe.to_string_lossy().into_owned(),
        CHILD_FLAG.to_string(),
        "midpoint".to_string(),
    ];
    let class = FeasibilityClass::new(10, 1.0, 1e-14, Promise::MayBeEmpty).unwrap();
    let queries = 10 * u64::from(class.halvings()) + 1;
    let wrapped = Class::Feasibility(class.clone());
    let header = Header {
        format: FORMAT_VERSION,
        tool: "bench".into(),
        class: wrapped.clone(),
        adversary: "halving".into(),
        method: "external".into(),
        seed: 0,
        budget: u64::MAX,
    };
    let play = |watch: &mut Stopwatch| {
        let mut method =
            ExternalMethod::new(&command, &wrapped, u64::MAX, 0, ExternalSettings::default())
                .unwrap();
        let mut adversary = Halving::new(&class);
        let record = game::play(
            &header,
            &mut method,
            &mut adversary,
            &GameSettings { budget: u64::MAX },
            &mut [watch],
        )
        .unwrap();
        assert_eq!(record.queries_used, queries, "{:?}", record.ending);
        black_box(record)
    };
    let mut group = c.benchmark_group("pipe_round_trips");
    group.throughput(Throughput::Elements(queries));
    group.bench_function(
        "protocol games with start-up, compiled child, d = 10",
        |b| b.iter(|| play(&mut Stopwatch::default())),
    );
    group.throughput(Throughput::Elements(queries - 1));
    group.bench_function("protocol round trips, compiled child, d = 10", |b| {
        b.iter_custom(|iters| {
            let mut total = Duration::ZERO;
            for _ in 0..iters {
                let mut watch = Stopwatch::default();
                play(&mut watch);
                total += watch.elapsed;
            }
            total
        })
    });
    group.finish();
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if let Some(pos) = args.iter().position(|a| a == CHILD_FLAG) {
        child(args.get(pos + 1).map_or("echo", String::as_str));
        return;
    }
    let mut criterion = Criterion::default().configure_from_args();
    ping_pong(&mut criterion);
    protocol_game(&mut criterion);
    criterion.final_summary();
}
