//! Memory per byte of source: a counting allocator records the peak of
//! live heap bytes while a large worksheet is parsed and formatted. The
//! bounds are generous guards against regressions (a quadratic or a
//! per-byte blow-up), not targets; the figures are in README.md.

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering};

struct Counting;

static LIVE: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(layout) };
        if !p.is_null() {
            let now = LIVE.fetch_add(layout.size(), Ordering::Relaxed) + layout.size();
            PEAK.fetch_max(now, Ordering::Relaxed);
        }
        p
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) };
        LIVE.fetch_sub(layout.size(), Ordering::Relaxed);
    }
}

#[global_allocator]
static A: Counting = Counting;

/// Peak live heap bytes above the level before `f` ran.
fn peak_of(f: impl FnOnce()) -> usize {
    let base = LIVE.load(Ordering::Relaxed);
    PEAK.store(base, Ordering::Relaxed);
    f();
    PEAK.load(Ordering::Relaxed) - base
}

#[path = "common/mix.rs"]
mod mix;

/// 25 000 statements of the usual kinds (the mix of the parse benchmark;
/// the ratio per byte is the same at 100 000, see README.md).
fn worksheet() -> String {
    mix::worksheet(25_000)
}

// One test only: the counters are process-wide.
#[test]
fn memory_per_byte_of_source() {
    let src = worksheet();
    let n = src.len();
    let parse_peak = peak_of(|| {
        let w = sheaf_grammar::parse(&src).unwrap();
        assert_eq!(w.statements.len(), 25_000);
    });
    let format_peak = peak_of(|| {
        let out = sheaf_grammar::format(&src).unwrap();
        assert!(out.len() > n / 2);
    });
    // Many long flat chains (each at the operand limit): memory is linear.
    let chain = format!("x = a{}\n", " + a".repeat(1_000)).repeat(100);
    let chain_peak = peak_of(|| {
        let w = sheaf_grammar::parse(&chain).unwrap();
        assert_eq!(w.statements.len(), 100);
    });
    println!(
        "source {n} bytes: parse peak {parse_peak} ({:.1}/byte), format peak {format_peak} ({:.1}/byte); \
         100 chains of 1001 terms ({} bytes): parse peak {chain_peak} ({:.1}/byte)",
        parse_peak as f64 / n as f64,
        format_peak as f64 / n as f64,
        chain.len(),
        chain_peak as f64 / chain.len() as f64,
    );
    assert!(parse_peak < 30 * n, "{parse_peak}");
    assert!(format_peak < 40 * n, "{format_peak}");
    assert!(chain_peak < 200 * chain.len(), "{chain_peak}");
}
