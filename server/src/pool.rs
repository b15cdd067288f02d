//! A small pool for CPU-heavy work on behalf of anonymous reads (outlooks computed on
//! demand): a few permits and a bounded queue. When the queue is full the request is refused
//! at once (503 with `Retry-After`) instead of waiting, so a crowd of such reads can neither
//! pile up nor take the permits that refits use.

use std::sync::atomic::{AtomicUsize, Ordering};

use tokio::sync::{Semaphore, SemaphorePermit};

/// Permits plus a bounded number of waiters.
#[derive(Debug)]
pub struct Pool {
    permits: Semaphore,
    waiting: AtomicUsize,
    max_waiting: usize,
}

/// The pool's queue is full.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
#[error("too many outlooks are being computed on demand; try again shortly")]
pub struct PoolFull;

impl Pool {
    /// `permits` runs at once, at most `max_waiting` more waiting.
    pub fn new(permits: usize, max_waiting: usize) -> Self {
        Self {
            permits: Semaphore::new(permits),
            waiting: AtomicUsize::new(0),
            max_waiting,
        }
    }

    /// Waits for a permit, or refuses at once when `max_waiting` are already waiting.
    pub async fn enter(&self) -> Result<SemaphorePermit<'_>, PoolFull> {
        if let Ok(permit) = self.permits.try_acquire() {
            return Ok(permit);
        }
        let before = self.waiting.fetch_add(1, Ordering::AcqRel);
        let _leave = Leave(&self.waiting);
        if before >= self.max_waiting {
            return Err(PoolFull);
        }
        self.permits.acquire().await.map_err(|_| PoolFull)
    }
}

/// Decrements the waiting count when dropped (also when the waiting request is cancelled).
struct Leave<'a>(&'a AtomicUsize);

impl Drop for Leave<'_> {
    fn drop(&mut self) {
        self.0.fetch_sub(1, Ordering::AcqRel);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[tokio::test]
    async fn a_full_queue_refuses_at_once() {
        let pool = std::sync::Arc::new(Pool::new(1, 1));
        let held = pool.enter().await.unwrap();
        let p = std::sync::Arc::clone(&pool);
        let waiter = tokio::spawn(async move { p.enter().await.map(|_| ()) });
        tokio::task::yield_now().await;
        while pool.waiting.load(Ordering::Acquire) == 0 {
            tokio::task::yield_now().await;
        }
        assert_eq!(pool.enter().await.err(), Some(PoolFull));
        drop(held);
        assert_eq!(waiter.await.unwrap(), Ok(()));
        assert!(pool.enter().await.is_ok());
    }
}
