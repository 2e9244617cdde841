//! Memory: the prices of the data structures that methods and adversaries keep, the
//! sizes users write (`--max-memory 8G`), and the cap a game must fit in.
//!
//! Every built-in method and adversary states what it needs from its parameters in its
//! registry entry (`MethodInfo::memory`, `AdversaryInfo::memory`): the bytes its data
//! structures hold in a game of a given number of queries on a class, each structure
//! priced from above and counted as far as that many queries surely build it (a method
//! that keeps its cuts: one a query; the slab funnel: the levels a correct method must
//! open). The helpers here price the structures several of them share;
//! [`crate::resources`] adds a game's parts up over the queries the game is sure to ask
//! (what the adversary forces, what the method plans, the horizon; at most the budget)
//! and refuses, before the game starts, one that needs more than the [`Cap`]. So a
//! refused game surely cannot fit, while a game that runs far beyond what it must ask
//! (up to a large budget) can still outgrow its estimate: counting every structure up to
//! the budget would refuse ordinary games that stop after a few hundred queries.
//!
//! The prices count the numbers stored (8 bytes an `f64`, [`EXACT`] bytes an exact
//! number held as an `f64`, a vector's 24-byte header where vectors are kept per item),
//! not the spare capacity of growing vectors (untouched capacity is not resident) nor
//! the allocator's rounding; the constants of the linear-programming work
//! ([`lp_work`]) were measured (common practice, no source). They are guides for
//! refusing games that cannot fit, never results.
//!
//! Sizes are printed and read in decimal units (1 kB = 1000 bytes, 1 GB = 10^9 bytes);
//! `KiB`, `MiB`, `GiB` and `TiB` are read as powers of 1024.

use crate::class::Class;

/// Bytes of an `f64`.
pub const F64: f64 = 8.0;
/// Bytes of an exact number ([`crate::exact::Exact`]) that holds an `f64` (a big rational
/// adds its digits on the heap).
pub const EXACT: f64 = 16.0;
/// Bytes of a vector's header (pointer, length, capacity).
pub const VEC: f64 = 24.0;
/// What any game holds besides its method and adversary: the program itself, the
/// transcript writer's buffers, the query buffer, and the answers the streaming verifier
/// keeps in memory before it moves them to a temporary file (8 MiB,
/// [`crate::certificate::stream::SPOOL_BYTES`]).
pub const GAME_BASE: f64 = 32e6;

/// The cap when the available memory cannot be read (systems without
/// `/proc/meminfo`): 4 GiB.
pub const DEFAULT_CAP: u64 = 4 << 30;

/// `x` bytes (an estimate computed in `f64`), rounded up; saturates at `u64::MAX`.
pub fn bytes(x: f64) -> u64 {
    if x.is_nan() || x >= u64::MAX as f64 {
        u64::MAX
    } else if x <= 0.0 {
        0
    } else {
        x.ceil() as u64
    }
}

/// A method or adversary whose state is a few vectors of length `d` (the query
/// dimension): `vectors` of them, each `f64` entry 8 bytes, plus 4 kB of fixed state.
pub fn vectors(count: f64, d: f64) -> f64 {
    count * F64 * d + 4096.0
}

/// The polytope model of the cutting-plane methods ([`crate::geometry::polytope`]): the
/// box and its bounding box (4 d numbers) and every stored cut as a dense row of d
/// numbers and its offset; at most one cut a query.
pub fn polytope(d: f64, cuts: f64) -> f64 {
    F64 * (4.0 * d + cuts * (d + 1.0))
}

/// The first-order bundle every first-order cutting-plane method keeps
/// ([`crate::method::kelley::Bundle`]): every answer's query point, value and
/// subgradient as `f64` (2 d + 1 numbers and two vector headers an answer).
pub fn bundle(d: f64, answers: f64) -> f64 {
    answers * (F64 * (2.0 * d + 1.0) + 2.0 * VEC)
}

/// Bytes per stored constraint entry of one linear program solved by Clarabel
/// ([`crate::geometry::lp`]): the sparse rows as the caller builds them (16 bytes an
/// entry), their column copy, the constraint matrix, the KKT matrix, its permuted copy
/// and its factor. Measured: the peak resident memory of one solve over random dense rows
/// grew by 101 to 132 bytes an entry beyond the caller's rows (d = 20 to 200, 1000 to
/// 20 000 rows); rounded up to 160 with the caller's rows.
pub const LP_PER_ENTRY: f64 = 160.0;
/// Bytes per row or column of one linear program (vectors of the interior-point method).
pub const LP_PER_ROW: f64 = 256.0;

/// The working memory of one linear program with `rows` constraints, `cols` variables
/// and `entries` nonzero constraint entries: [`LP_PER_ENTRY`] per entry, [`LP_PER_ROW`]
/// per row and column, and the dense block the factorisation forms over the variables
/// once the rows are eliminated (cols^2 / 2 entries of 16 bytes).
pub fn lp_work(rows: f64, cols: f64, entries: f64) -> f64 {
    LP_PER_ENTRY * entries + LP_PER_ROW * (rows + cols) + 8.0 * cols * cols
}

/// The shared model of the polytope methods (`centroid`, `sampled-centroid`,
/// `analytic-center`; `crate::method::cut_model`) over `queries` queries: the polytope
/// with one cut a query ([`polytope`]) and the Chebyshev-centre LP over all of its rows
/// (a row a query and 2 d more, d + 1 variables, dense rows); on first-order classes also the
/// bundle ([`bundle`]), the copy of the rows handed to the model LP, and that LP (two
/// rows an answer, d + 1 variables).
pub fn cut_model(class: &Class, queries: u64) -> f64 {
    let d = class.query_dim() as f64;
    let b = queries as f64;
    let mut total = polytope(d, b) + lp_work(b + 2.0 * d, d + 1.0, b * (d + 1.0) + 2.0 * d);
    if let Class::FirstOrder(_) = class {
        total += bundle(d, b)
            + F64 * b * (d + 1.0)
            + lp_work(2.0 * b + 2.0 * d, d + 1.0, 2.0 * b * (d + 1.0) + 2.0 * d);
    }
    total
}

/// `count` levels of the first-order level constructions (slab funnel, orthant;
/// docs/theory.md §2.3 and §2.4) in dimension d, the deepest being level `deepest`: each
/// coordinate of a level holds an exact centre (numbers of level k have about 2 k bits),
/// `f64` views, a sign and a dyadic copy: at most 160 + deepest / 2 bytes.
pub fn levels(d: f64, count: f64, deepest: f64) -> f64 {
    d * count * (160.0 + deepest / 2.0)
}

/// The orthant-level adversary (`crate::adversary::orthant`) over `queries` queries in
/// dimension d: every answer kept (the query, the value and a subgradient of d exact
/// numbers), its current level ([`levels`]; it forces no count, so deeper levels are the
/// method's doing and are not counted), and the universal certificate search at the end
/// (docs/theory.md §2.2): its LP over every answer (d + 2 variables) and two witnesses
/// with one piece an answer, held also by the final record, the verifier and its piece
/// envelopes.
pub fn orthant(class: &Class, queries: u64) -> u64 {
    let d = class.query_dim() as f64;
    let b = queries as f64;
    let answers = b * (F64 * d + EXACT * (d + 1.0) + 2.0 * VEC);
    let search = lp_work(b + 4.0 * d, d + 2.0, b * (d + 2.0));
    let witnesses = 5.0 * b * (EXACT * (d + 1.0) + VEC);
    bytes(answers + levels(d, 1.0, 1.0) + search + witnesses + vectors(4.0, d))
}

/// Lattice points a method or adversary lists, as the class has them (saturating).
pub fn lattice_points(lower: &[i64], upper: &[i64]) -> f64 {
    lower
        .iter()
        .zip(upper)
        .map(|(l, u)| (u - l + 1) as f64)
        .product()
}

/// A byte count in decimal units: `512 B`, `8.0 MB`, `21.3 GB`, `8.0 TB`.
pub fn format_size(bytes: u64) -> String {
    const UNITS: [&str; 6] = ["kB", "MB", "GB", "TB", "PB", "EB"];
    if bytes < 1000 {
        return format!("{bytes} B");
    }
    let mut value = bytes as f64 / 1000.0;
    let mut unit = 0;
    while value >= 999.95 && unit + 1 < UNITS.len() {
        value /= 1000.0;
        unit += 1;
    }
    format!("{value:.1} {}", UNITS[unit])
}

/// Reads a size: a number (digits with an optional fraction) and an optional unit:
/// none or `B` (bytes), `K`/`KB`/`kB`, `M`/`MB`, `G`/`GB`, `T`/`TB` (powers of 1000), or
/// `KiB`, `MiB`, `GiB`, `TiB` (powers of 1024); case is ignored, as is a space between
/// number and unit. At least one byte and below 2^64. `Err` is a sentence for the user.
pub fn parse_size(text: &str) -> Result<u64, String> {
    let trimmed = text.trim();
    let split = trimmed
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(trimmed.len());
    let (number, unit) = trimmed.split_at(split);
    let bad = || {
        format!(
            "{text:?} is not a size: write a number and a unit, for example 512M, 8G or 1T \
             (K, M, G, T are powers of 1000; KiB, MiB, GiB, TiB powers of 1024)"
        )
    };
    if number.is_empty() || number.matches('.').count() > 1 || number == "." {
        return Err(bad());
    }
    let value: f64 = number.parse().map_err(|_| bad())?;
    let scale: f64 = match unit.trim().to_ascii_lowercase().as_str() {
        "" | "b" => 1.0,
        "k" | "kb" => 1e3,
        "m" | "mb" => 1e6,
        "g" | "gb" => 1e9,
        "t" | "tb" => 1e12,
        "kib" => 1024.0,
        "mib" => 1024.0 * 1024.0,
        "gib" => 1024.0 * 1024.0 * 1024.0,
        "tib" => 1024.0 * 1024.0 * 1024.0 * 1024.0,
        _ => return Err(bad()),
    };
    let size = value * scale;
    if size < 1.0 {
        return Err(format!("{text:?} is less than one byte"));
    }
    if size >= u64::MAX as f64 {
        return Err(format!("{text:?} is too large (at most 2^64 bytes)"));
    }
    Ok(size.floor() as u64)
}

/// The memory available for new work, from `MemAvailable` in `/proc/meminfo` (Linux;
/// kernel 3.14 and later); `None` elsewhere or when it cannot be read.
pub fn available() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    parse_meminfo(&text)
}

/// `MemAvailable` (in KiB in the file) of a `/proc/meminfo` text, in bytes.
pub fn parse_meminfo(text: &str) -> Option<u64> {
    let line = text.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let mut words = line.split_whitespace().skip(1);
    let value: u64 = words.next()?.parse().ok()?;
    match words.next() {
        Some("kB") => value.checked_mul(1024),
        None => Some(value),
        Some(_) => None,
    }
}

/// Where the cap came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CapSource {
    /// The machine's available memory (`MemAvailable`).
    Available,
    /// The fixed default ([`DEFAULT_CAP`]): the available memory could not be read.
    Default,
    /// `--max-memory`.
    Flag,
}

/// The most memory one game (or, in a sweep, the games played at once) may need.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Cap {
    /// The cap in bytes.
    pub bytes: u64,
    /// Where it came from.
    pub source: CapSource,
}

impl Cap {
    /// `--max-memory` when given, else the available memory, else [`DEFAULT_CAP`].
    pub fn new(flag: Option<u64>) -> Cap {
        match (flag, available()) {
            (Some(bytes), _) => Cap {
                bytes,
                source: CapSource::Flag,
            },
            (None, Some(bytes)) => Cap {
                bytes,
                source: CapSource::Available,
            },
            (None, None) => Cap {
                bytes: DEFAULT_CAP,
                source: CapSource::Default,
            },
        }
    }

    /// The cap in words: "the 21.3 GB available", "the 1.0 MB of --max-memory", or "the
    /// default cap of 4.3 GB".
    pub fn describe(&self) -> String {
        let size = format_size(self.bytes);
        match self.source {
            CapSource::Available => format!("the {size} available"),
            CapSource::Flag => format!("the {size} of --max-memory"),
            CapSource::Default => format!(
                "the default cap of {size} (the available memory cannot be read on this system)"
            ),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_are_read_in_both_unit_systems() {
        assert_eq!(parse_size("512M"), Ok(512_000_000));
        assert_eq!(parse_size("8G"), Ok(8_000_000_000));
        assert_eq!(parse_size("8 GB"), Ok(8_000_000_000));
        assert_eq!(parse_size("1T"), Ok(1_000_000_000_000));
        assert_eq!(parse_size("1.5g"), Ok(1_500_000_000));
        assert_eq!(parse_size("4GiB"), Ok(4 << 30));
        assert_eq!(parse_size("1024"), Ok(1024));
        for bad in [
            "",
            "G",
            "-1G",
            "12X",
            "1..5G",
            "0",
            "0.1",
            "1e3",
            "99999999999T",
        ] {
            let err = parse_size(bad).unwrap_err();
            assert!(err.contains(bad) || bad.is_empty(), "{bad}: {err}");
        }
    }

    #[test]
    fn sizes_are_printed_in_decimal_units() {
        assert_eq!(format_size(512), "512 B");
        assert_eq!(format_size(8_000_000_000_000), "8.0 TB");
        assert_eq!(format_size(21_300_000_000), "21.3 GB");
        assert_eq!(format_size(999_999), "1.0 MB");
        assert_eq!(format_size(u64::MAX), "18.4 EB");
    }

    #[test]
    fn meminfo_is_read_in_kib() {
        let text = "MemTotal:       25165824 kB\nMemFree:  100 kB\nMemAvailable:   23457264 kB\n";
        assert_eq!(parse_meminfo(text), Some(23_457_264 * 1024));
        assert_eq!(parse_meminfo("MemFree: 1 kB\n"), None);
    }

    #[test]
    fn exact_numbers_take_the_stated_bytes() {
        assert_eq!(std::mem::size_of::<crate::exact::Exact>() as f64, EXACT);
        assert_eq!(std::mem::size_of::<Vec<f64>>() as f64, VEC);
    }
}
