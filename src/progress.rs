//! Counters of long work, read by the command line's progress reports
//! (`naysayer::cli::progress`): the queries of the game being played, the games of a
//! sweep, the states of a minimax search or the replays of a hunt.
//!
//! A counter is a few atomics that the working code sets with relaxed stores and a
//! reporting thread reads; nothing waits on them and no result depends on them. The game
//! loop ([`crate::game::play`]) updates [`QUERIES`] only while a report watches it
//! ([`Counter::watch`]), which it reads once when a game starts, so an unwatched game
//! (every game of a sweep) pays nothing per query and a watched one one store.

use std::sync::atomic::{AtomicBool, AtomicU64, AtomicU8, Ordering};

/// What the counted work is doing now, for the report's words.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Stage {
    /// Counting up.
    Working,
    /// The game is over and its certificate (or demonstration) is being checked.
    Checking,
}

/// Work done so far and, when known, the total.
#[derive(Debug)]
pub struct Counter {
    done: AtomicU64,
    /// 0 while the total is unknown.
    total: AtomicU64,
    watched: AtomicBool,
    /// 0: [`Stage::Working`], 1: [`Stage::Checking`].
    stage: AtomicU8,
}

impl Counter {
    /// A counter at 0 of an unknown total, not watched.
    pub const fn new() -> Counter {
        Counter {
            done: AtomicU64::new(0),
            total: AtomicU64::new(0),
            watched: AtomicBool::new(false),
            stage: AtomicU8::new(0),
        }
    }

    /// Sets the stage.
    pub fn set_stage(&self, stage: Stage) {
        self.stage.store(stage as u8, Ordering::Relaxed);
    }

    /// The stage.
    pub fn stage(&self) -> Stage {
        match self.stage.load(Ordering::Relaxed) {
            0 => Stage::Working,
            _ => Stage::Checking,
        }
    }

    /// Sets the work done.
    pub fn set(&self, done: u64) {
        self.done.store(done, Ordering::Relaxed);
    }

    /// Adds to the work done.
    pub fn add(&self, amount: u64) {
        self.done.fetch_add(amount, Ordering::Relaxed);
    }

    /// Sets the total (0: unknown).
    pub fn set_total(&self, total: u64) {
        self.total.store(total, Ordering::Relaxed);
    }

    /// The work done.
    pub fn done(&self) -> u64 {
        self.done.load(Ordering::Relaxed)
    }

    /// The total, when known.
    pub fn total(&self) -> Option<u64> {
        match self.total.load(Ordering::Relaxed) {
            0 => None,
            total => Some(total),
        }
    }

    /// Starts or stops watching: while watched, the working code keeps the counter up to
    /// date; starting resets it to 0 of an unknown total.
    pub fn watch(&self, on: bool) {
        if on {
            self.set(0);
            self.set_total(0);
            self.set_stage(Stage::Working);
        }
        self.watched.store(on, Ordering::Relaxed);
    }

    /// Whether a report watches the counter.
    pub fn watched(&self) -> bool {
        self.watched.load(Ordering::Relaxed)
    }
}

impl Default for Counter {
    fn default() -> Self {
        Counter::new()
    }
}

/// Queries answered in the game being played (set by the game loop while watched; its
/// stage turns to [`Stage::Checking`] when the game is over).
pub static QUERIES: Counter = Counter::new();

/// Games finished in the sweep being run, of its total (set by the sweep while
/// watched), resumed games included.
pub static GAMES: Counter = Counter::new();

/// States of a search (a minimax search's memoised states or a method's game-tree nodes;
/// set while watched).
pub static SEARCH: Counter = Counter::new();

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_counter_counts_and_knows_its_total() {
        let counter = Counter::new();
        assert_eq!((counter.done(), counter.total()), (0, None));
        counter.watch(true);
        counter.set(5);
        counter.add(2);
        counter.set_total(10);
        assert_eq!((counter.done(), counter.total()), (7, Some(10)));
        assert!(counter.watched());
        counter.watch(true);
        assert_eq!((counter.done(), counter.total()), (0, None));
        counter.watch(false);
        assert!(!counter.watched());
    }
}
