//! A global allocator that counts the bytes each thread holds and their peak, and can
//! refuse a thread's larger requests beyond a limit (shared by the `factor_memory`
//! example and the memory test; install it with
//! `#[global_allocator] static A: Counting = Counting;`).

use std::alloc::{GlobalAlloc, Layout, System};
use std::cell::Cell;

/// The system allocator, counting per thread.
pub struct Counting;

thread_local! {
    static HELD: Cell<isize> = const { Cell::new(0) };
    static PEAK: Cell<isize> = const { Cell::new(0) };
    static LIMIT: Cell<isize> = const { Cell::new(isize::MAX) };
}

/// Requests of at least this many bytes may be refused (smaller ones always succeed,
/// as they mostly do when a real system runs short).
const REFUSABLE: usize = 4096;

/// Whether a request that adds `grow` bytes of a block of `size` bytes goes beyond the
/// thread's limit.
fn refused(size: usize, grow: isize) -> bool {
    size >= REFUSABLE
        && HELD
            .try_with(|held| LIMIT.try_with(|limit| held.get().saturating_add(grow) > limit.get()))
            .is_ok_and(|r| r.unwrap_or(false))
}

fn count(delta: isize) {
    // `try_with`: the thread-locals may already be gone while a thread exits
    let _ = HELD.try_with(|held| {
        let now = held.get() + delta;
        held.set(now);
        let _ = PEAK.try_with(|peak| peak.set(peak.get().max(now)));
    });
}

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        if refused(layout.size(), layout.size() as isize) {
            return std::ptr::null_mut();
        }
        let p = unsafe { System.alloc(layout) };
        if !p.is_null() {
            count(layout.size() as isize);
        }
        p
    }

    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        if refused(layout.size(), layout.size() as isize) {
            return std::ptr::null_mut();
        }
        let p = unsafe { System.alloc_zeroed(layout) };
        if !p.is_null() {
            count(layout.size() as isize);
        }
        p
    }

    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) };
        count(-(layout.size() as isize));
    }

    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        if refused(new_size, new_size as isize - layout.size() as isize) {
            return std::ptr::null_mut();
        }
        let p = unsafe { System.realloc(ptr, layout, new_size) };
        if !p.is_null() {
            count(new_size as isize - layout.size() as isize);
        }
        p
    }
}

/// Peak bytes allocated on this thread while `f` runs, above what was held before it.
pub fn peak_of(f: impl FnOnce()) -> usize {
    let before = HELD.with(Cell::get);
    PEAK.with(|peak| peak.set(before));
    f();
    (PEAK.with(Cell::get) - before) as usize
}

/// Runs `f` with this thread's requests of 4 KiB or more refused once the thread would
/// hold more than `bytes` above what it holds now.
#[allow(dead_code)] // used by the memory test, not by the example
pub fn with_limit<R>(bytes: usize, f: impl FnOnce() -> R) -> R {
    let held = HELD.with(Cell::get);
    LIMIT.with(|limit| limit.set(held.saturating_add(bytes as isize)));
    let result = f();
    LIMIT.with(|limit| limit.set(isize::MAX));
    result
}
