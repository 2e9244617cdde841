//! Measures resident memory of a long game whose transcript goes to disk.
//!
//! `cargo run --release --example memory_probe -- [d] [rho] [budget] [transcript]`
//! plays `ellipsoid` against `halving` (defaults: d = 200, R = 1, rho = 1e-6, budget
//! 1 000 000) and prints VmRSS (Linux, /proc/self/status) after 10^3, 10^4, 10^5 and
//! 10^6 queries.

use naysayer::adversary::{Adversary, Halving};
use naysayer::class::{Class, FeasibilityClass, Promise};
use naysayer::error::Error;
use naysayer::game::{self, GameSettings, Observer};
use naysayer::method::ellipsoid::Ellipsoid;
use naysayer::oracle::Answer;
use naysayer::transcript::Header;
use naysayer::transcript::{Flush, TranscriptWriter, FORMAT_VERSION};

struct RssProbe;

fn rss_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmRSS:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

impl Observer for RssProbe {
    fn on_query(
        &mut self,
        index: u64,
        _: &[f64],
        _: &Answer,
        _: &dyn Adversary,
    ) -> Result<(), Error> {
        if [1_000, 10_000, 100_000, 1_000_000].contains(&index) {
            match rss_kib() {
                Some(kib) => println!(
                    "after {index:>9} queries: resident {:.1} MB",
                    kib as f64 / 1024.0
                ),
                None => println!("after {index:>9} queries: resident memory unavailable"),
            }
        }
        Ok(())
    }
}

fn main() -> Result<(), Error> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let d: usize = args.first().and_then(|s| s.parse().ok()).unwrap_or(200);
    let rho: f64 = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(1e-6);
    let budget: u64 = args
        .get(2)
        .and_then(|s| s.parse().ok())
        .unwrap_or(1_000_000);
    let path = args.get(3).cloned().unwrap_or_else(|| {
        std::env::temp_dir()
            .join("naysayer-memory-probe.jsonl")
            .display()
            .to_string()
    });
    let class = FeasibilityClass::new(d, 1.0, rho, Promise::MayBeEmpty)?;
    let header = Header {
        format: FORMAT_VERSION,
        tool: format!("naysayer {}", env!("CARGO_PKG_VERSION")),
        class: Class::Feasibility(class.clone()),
        adversary: "halving".into(),
        method: "ellipsoid".into(),
        seed: 0,
        budget,
    };
    let mut writer = TranscriptWriter::create(std::path::Path::new(&path), Flush::Periodic)?;
    let mut probe = RssProbe;
    let record = game::play(
        &header,
        &mut Ellipsoid::new(&class),
        &mut Halving::new(&class),
        &GameSettings { budget },
        &mut [&mut writer, &mut probe],
    )?;
    println!("queries used {}; transcript {path}", record.queries_used);
    Ok(())
}
