//! Spreads independent pieces of work over threads, results in a fixed
//! order: the statistics' tests and resamples, language detection, each
//! chain's build and search.
//!
//! Data flow: at the bottom beside `error`; it knows nothing of the work.
//! Callers make every piece a pure function of its number (the statistics
//! key their random draws by it, see `stats/stream.rs`), so which thread
//! runs a piece, and when, cannot change a result: outputs are identical for
//! any thread count.

use std::sync::atomic::{AtomicUsize, Ordering};

/// `work(0), …, work(count − 1)` on up to `threads` scoped threads (one
/// thread, the caller's, when `threads` ≤ 1 or there is one piece),
/// returned in index order. Threads take the next undone piece as they
/// finish one, so uneven pieces still share the cores. A panic in a piece
/// is resumed on the caller's thread.
pub(crate) fn map_indexed<R, F>(count: usize, threads: usize, work: F) -> Vec<R>
where
    R: Send,
    F: Fn(usize) -> R + Sync,
{
    let threads = threads.min(count);
    if threads <= 1 {
        return (0..count).map(work).collect();
    }
    let next = AtomicUsize::new(0);
    let parts: Vec<Vec<(usize, R)>> = std::thread::scope(|scope| {
        let handles: Vec<_> = (0..threads)
            .map(|_| {
                scope.spawn(|| {
                    let mut done = Vec::new();
                    loop {
                        let i = next.fetch_add(1, Ordering::Relaxed);
                        if i >= count {
                            break done;
                        }
                        done.push((i, work(i)));
                    }
                })
            })
            .collect();
        handles
            .into_iter()
            .map(|h| h.join().unwrap_or_else(|panic| std::panic::resume_unwind(panic)))
            .collect()
    });
    let mut all: Vec<(usize, R)> = parts.into_iter().flatten().collect();
    all.sort_unstable_by_key(|(i, _)| *i);
    all.into_iter().map(|(_, r)| r).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_results_in_index_order_for_any_thread_count() {
        let one = map_indexed(100, 1, |i| i * i);
        assert_eq!(one, (0..100).map(|i| i * i).collect::<Vec<_>>());
        for threads in [2, 3, 8, 200] {
            assert_eq!(map_indexed(100, threads, |i| i * i), one);
        }
        assert!(map_indexed(0, 4, |i| i).is_empty());
    }
}
