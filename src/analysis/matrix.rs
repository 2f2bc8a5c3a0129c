//! A travel-time matrix: every origin's row of [`WindowRun::origin_rows`], run on several threads
//! (native shells; the page runs origins in Web Workers instead), handed to the caller in the
//! order of the origins so the output is the same whatever the number of threads. Memory does not
//! grow with the number of origins: rows are handed on as soon as their turn comes, and the
//! threads run at most a few origins ahead of the one being written.

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::{mpsc, Condvar, Mutex};

use crate::analysis::window::{Destinations, Rows, TravelTimes, WindowRun};
use crate::route::SearchState;

/// How the matrix run ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Ended {
    Done,
    Cancelled,
}

/// Shard `i` of `n` (1-based) of the origins: the `i`-th of `n` consecutive runs of nearly equal
/// length, in the order given, so the shards together are the origins, each once (the CLI's
/// `--shard i/n`, the Python package's `shard=(i, n)` and its Dask runner).
pub fn shard(origins: &[usize], i: usize, n: usize) -> &[usize] {
    let len = origins.len();
    &origins[(i - 1) * len / n..i * len / n]
}

/// Runs `origins` (places) on `threads` threads and calls `sink(i, origin, rows)` for each in
/// order. Stops early, without calling `sink` again, when `cancel` is set or `sink` fails.
pub fn run<E: Send>(
    run: WindowRun,
    origins: &[usize],
    dest: &Destinations,
    threads: usize,
    cancel: &AtomicBool,
    mut sink: impl FnMut(usize, usize, &Rows) -> Result<(), E>,
) -> Result<Ended, E> {
    let work = |st: &mut SearchState, times: &mut TravelTimes, i: usize| {
        let mut rows = Rows::default();
        run.origin_rows(st, origins[i], dest, times, &mut rows);
        rows
    };
    run_each(origins.len(), threads, cancel, work, |i, rows| sink(i, origins[i], &rows))
}

/// Runs `work(state, buffer, i)` for `i` in `0..n` on `threads` threads (each with its own search
/// state and buffer) and hands the results to `sink(i, result)` in order of `i`, with at most
/// 4 × threads results waiting. Stops early, without calling `sink` again, when `cancel` is set
/// or `sink` fails.
pub fn run_each<T: Send, E: Send>(
    n: usize,
    threads: usize,
    cancel: &AtomicBool,
    work: impl Fn(&mut SearchState, &mut TravelTimes, usize) -> T + Sync,
    sink: impl FnMut(usize, T) -> Result<(), E>,
) -> Result<Ended, E> {
    run_each_with(
        n,
        threads,
        cancel,
        || (SearchState::new(), TravelTimes::default()),
        |s: &mut (SearchState, TravelTimes), i| work(&mut s.0, &mut s.1, i),
        sink,
    )
}

/// [`run_each`] with a state of the caller's own per thread, made by `init`.
pub fn run_each_with<S, T: Send, E: Send>(
    n: usize,
    threads: usize,
    cancel: &AtomicBool,
    init: impl Fn() -> S + Sync,
    work: impl Fn(&mut S, usize) -> T + Sync,
    mut sink: impl FnMut(usize, T) -> Result<(), E>,
) -> Result<Ended, E> {
    let threads = threads.clamp(1, n.max(1));
    let ahead = 4 * threads;
    let next = AtomicUsize::new(0);
    // The index of the next result to hand on; threads wait while they are too far ahead of it.
    let written = (Mutex::new(0usize), Condvar::new());
    let (tx, rx) = mpsc::channel::<(usize, T)>();
    std::thread::scope(|scope| {
        for _ in 0..threads {
            let tx = tx.clone();
            let (next, written, work, init) = (&next, &written, &work, &init);
            scope.spawn(move || {
                let mut st = init();
                loop {
                    let i = next.fetch_add(1, Ordering::Relaxed);
                    if i >= n || cancel.load(Ordering::Relaxed) {
                        return;
                    }
                    {
                        let mut w = written.0.lock().unwrap_or_else(|e| e.into_inner());
                        while i >= *w + ahead && !cancel.load(Ordering::Relaxed) {
                            // A timeout, so a cancel from outside (Ctrl-C) is seen without a notify.
                            w = written.1.wait_timeout(w, std::time::Duration::from_millis(50)).unwrap_or_else(|e| e.into_inner()).0;
                        }
                    }
                    let out = work(&mut st, i);
                    if tx.send((i, out)).is_err() {
                        return;
                    }
                }
            });
        }
        drop(tx);
        let mut pending: BTreeMap<usize, T> = BTreeMap::new();
        let mut turn = 0;
        let stop = |turn: usize| {
            cancel.store(true, Ordering::Relaxed);
            *written.0.lock().unwrap_or_else(|e| e.into_inner()) = turn;
            written.1.notify_all();
        };
        for (i, out) in rx.iter() {
            pending.insert(i, out);
            while let Some(out) = pending.remove(&turn) {
                if cancel.load(Ordering::Relaxed) {
                    stop(turn);
                    return Ok(Ended::Cancelled);
                }
                if let Err(e) = sink(turn, out) {
                    stop(turn);
                    return Err(e);
                }
                turn += 1;
                *written.0.lock().unwrap_or_else(|e| e.into_inner()) = turn;
                written.1.notify_all();
            }
        }
        Ok(if turn == n { Ended::Done } else { Ended::Cancelled })
    })
}
