//! The k most extreme items of a stream, in bounded memory.
//!
//! Flagged observations can number in the hundreds of thousands on a large
//! file; what a reader needs is how many there are and the worst few. This
//! keeps a count of everything offered and at most `capacity` items.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

/// An item with its extremity; the heap's top is the least extreme kept, so
/// it is the one a more extreme newcomer replaces.
struct Kept<T> {
    extremity: f64,
    order: usize,
    item: T,
}

impl<T> PartialEq for Kept<T> {
    fn eq(&self, other: &Self) -> bool {
        self.cmp(other) == Ordering::Equal
    }
}
impl<T> Eq for Kept<T> {}
impl<T> PartialOrd for Kept<T> {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl<T> Ord for Kept<T> {
    /// "Greater" means less extreme, so the max-heap's top is the first to
    /// drop. Among equals the later arrival drops first, which keeps the
    /// result independent of anything but the order items were offered in.
    fn cmp(&self, other: &Self) -> Ordering {
        other
            .extremity
            .total_cmp(&self.extremity)
            .then(self.order.cmp(&other.order))
    }
}

/// Counts every item offered and keeps the `capacity` most extreme.
pub struct Extremes<T> {
    capacity: usize,
    offered: usize,
    heap: BinaryHeap<Kept<T>>,
}

impl<T> Extremes<T> {
    pub fn new(capacity: usize) -> Self {
        Extremes {
            capacity,
            offered: 0,
            heap: BinaryHeap::with_capacity(capacity.min(1024)),
        }
    }

    /// Offers one item with its extremity (larger is more extreme).
    pub fn offer(&mut self, extremity: f64, item: T) {
        self.offer_at(extremity, self.offered, item);
    }

    /// Offers one item with its own place in the tie order (e.g. its data
    /// line): with distinct places the kept items do not depend on the
    /// order of offering, so runs of a file may be offered in any order.
    pub fn offer_at(&mut self, extremity: f64, order: usize, item: T) {
        let kept = Kept {
            extremity,
            order,
            item,
        };
        self.offered += 1;
        if self.heap.len() < self.capacity {
            self.heap.push(kept);
        } else if let Some(mut top) = self.heap.peek_mut()
            && kept < *top
        {
            *top = kept;
        }
    }

    /// How many items were offered in all.
    pub fn total(&self) -> usize {
        self.offered
    }

    /// The kept items, most extreme first (ties in the order offered, or
    /// by their places).
    pub fn into_most_extreme_first(self) -> Vec<T> {
        self.heap
            .into_sorted_vec()
            .into_iter()
            .map(|k| k.item)
            .collect()
    }
}

#[cfg(test)]
#[path = "extremes_tests.rs"]
mod tests;
