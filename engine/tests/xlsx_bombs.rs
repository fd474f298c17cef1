//! Workbook bombs: small files that inflate to hundreds of MiB must fail
//! (or succeed, when the requested cell comes first) in bounded memory.
//! Memory is measured with a counting allocator (peak bytes held while
//! reading); the default reading limits apply.

use std::alloc::{GlobalAlloc, Layout, System};
use std::io::{Cursor, Write};
use std::sync::Mutex;
use std::sync::atomic::{AtomicUsize, Ordering};

use sheaf_engine::xlsx::read_cells;
use zip::write::SimpleFileOptions;

struct Counting;

static NOW: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, l: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(l) };
        if !p.is_null() {
            let now = NOW.fetch_add(l.size(), Ordering::Relaxed) + l.size();
            PEAK.fetch_max(now, Ordering::Relaxed);
        }
        p
    }
    unsafe fn dealloc(&self, p: *mut u8, l: Layout) {
        unsafe { System.dealloc(p, l) };
        NOW.fetch_sub(l.size(), Ordering::Relaxed);
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

/// One test at a time: the counters are global.
static SERIAL: Mutex<()> = Mutex::new(());

/// Peak bytes held above the level at the start while running `f`.
fn peak_of<T>(f: impl FnOnce() -> T) -> (T, usize) {
    let base = NOW.load(Ordering::Relaxed);
    PEAK.store(base, Ordering::Relaxed);
    let out = f();
    let peak = PEAK.load(Ordering::Relaxed).saturating_sub(base);
    eprintln!("peak while reading: {:.1} MiB", peak as f64 / MIB as f64);
    (out, peak)
}

const MIB: usize = 1 << 20;
/// Bound on what reading may hold, far below the 256 MiB the bombs inflate
/// to (the reader buffers at most one 4 MiB run plus fixed buffers).
const BOUND: usize = 40 * MIB;

/// A workbook with one sheet whose XML is `head`, then `repeat` written
/// `times` times (streamed into the compressor), then `tail`; and an
/// optional shared-strings part built the same way.
fn bomb(sheet: (&str, &[u8], usize, &str), shared: Option<(&str, &[u8], usize, &str)>) -> Vec<u8> {
    let mut z = zip::ZipWriter::new(Cursor::new(Vec::new()));
    let opt = SimpleFileOptions::default();
    z.start_file("xl/workbook.xml", opt).unwrap();
    z.write_all(br#"<workbook xmlns:r="urn:r"><sheets><sheet name="S" sheetId="1" r:id="rId1"/></sheets></workbook>"#)
        .unwrap();
    z.start_file("xl/_rels/workbook.xml.rels", opt).unwrap();
    z.write_all(br#"<Relationships><Relationship Id="rId1" Target="worksheets/sheet1.xml"/></Relationships>"#)
        .unwrap();
    let mut part = |name: &str, (head, repeat, times, tail): (&str, &[u8], usize, &str)| {
        z.start_file(name, opt).unwrap();
        z.write_all(head.as_bytes()).unwrap();
        for _ in 0..times {
            z.write_all(repeat).unwrap();
        }
        z.write_all(tail.as_bytes()).unwrap();
    };
    part("xl/worksheets/sheet1.xml", sheet);
    if let Some(s) = shared {
        part("xl/sharedStrings.xml", s);
    }
    z.finish().unwrap().into_inner()
}

#[test]
fn sheet_bombs_fail_cleanly_in_bounded_memory() {
    let _g = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    // 300 MiB of comments (1 MiB each) before the requested row.
    let mut comment = b"<!--".to_vec();
    comment.extend(std::iter::repeat_n(b'x', MIB));
    comment.extend(b"-->");
    let b = bomb(
        (
            r#"<worksheet><sheetData><row r="1"><c r="A1"><v>1</v></c></row>"#,
            &comment,
            300,
            r#"<row r="2"><c r="A2"><v>2</v></c></row></sheetData></worksheet>"#,
        ),
        None,
    );
    assert!(b.len() < 4 * MIB, "a small file: {}", b.len());
    let (r, peak) = peak_of(|| read_cells(&b, &["S!A2"]));
    let e = r.unwrap_err().to_string();
    assert!(e.contains("inflates to more than 256 MiB"), "{e}");
    assert!(peak < BOUND, "peak {} MiB", peak / MIB);
    // The cell before the bomb is read.
    let (r, peak) = peak_of(|| read_cells(&b, &["S!A1"]));
    assert_eq!(r.unwrap()[0], Ok(1.0));
    assert!(peak < BOUND, "peak {} MiB", peak / MIB);

    // One value of 300 MiB (a single text run).
    let b = bomb(
        (
            r#"<worksheet><sheetData><row r="1"><c r="A1"><v>"#,
            &[b'9'; 1 << 16],
            300 * 16,
            r#"</v></c></row></sheetData></worksheet>"#,
        ),
        None,
    );
    let (r, peak) = peak_of(|| read_cells(&b, &["S!A1"]));
    let e = r.unwrap_err().to_string();
    assert!(e.contains("longer than 4 MiB"), "{e}");
    assert!(peak < BOUND, "peak {} MiB", peak / MIB);
}

#[test]
fn shared_strings_bomb_does_not_matter_for_an_ordinary_cell() {
    let _g = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    let si = format!("<si><t>{}</t></si>", "y".repeat(1000));
    let b = bomb(
        (
            r#"<worksheet><sheetData><row r="1"><c r="A1"><v>42</v></c><c r="B1" t="s"><v>0</v></c><c r="C1" t="s"><v>999999</v></c></row></sheetData></worksheet>"#,
            b"",
            0,
            "",
        ),
        Some(("<sst>", si.as_bytes(), 300_000, "</sst>")),
    );
    assert!(b.len() < 4 * MIB, "a small file: {}", b.len());
    let (r, peak) = peak_of(|| read_cells(&b, &["S!A1", "S!B1"]));
    let r = r.unwrap();
    assert_eq!(r[0], Ok(42.0));
    assert!(
        r[1].as_ref()
            .unwrap_err()
            .message
            .contains("1000 characters")
    );
    assert!(peak < BOUND, "peak {} MiB", peak / MIB);
    // A string far into the table: the table is read up to the limit,
    // then a clear error.
    let (r, peak) = peak_of(|| read_cells(&b, &["S!C1"]));
    let e = r.unwrap_err().to_string();
    assert!(
        e.contains("sharedStrings.xml") && e.contains("256 MiB"),
        "{e}"
    );
    assert!(peak < BOUND, "peak {} MiB", peak / MIB);
}
