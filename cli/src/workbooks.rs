//! Reading the workbook cells a worksheet asks for (`cell()` calls), before
//! the engine checks it: each workbook once, all its cells in one pass,
//! relative to the worksheet's folder and under the file-access policy
//! (README, "File access policy").

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use sheaf_engine::{CellRequest, Externals};

use crate::files::read_confined;

/// Largest workbook a worksheet may read (the reader bounds what it
/// inflates on its own).
pub const MAX_WORKBOOK_BYTES: u64 = 64 << 20;

/// Read every requested cell; failures become messages the checker shows
/// at the call.
pub fn read_cells(dir: &Path, requests: &[CellRequest], allowed: &[PathBuf]) -> Externals {
    let mut ext = Externals::none();
    let mut by_book: BTreeMap<&str, Vec<&str>> = BTreeMap::new();
    for r in requests {
        let refs = by_book.entry(r.book.as_str()).or_default();
        if !refs.contains(&r.reference.as_str()) {
            refs.push(r.reference.as_str());
        }
    }
    for (book, refs) in by_book {
        let bytes = match read_confined(dir, book, allowed, MAX_WORKBOOK_BYTES) {
            Ok((_, bytes)) => bytes,
            Err(e) => {
                for reference in refs {
                    ext.set_cell(book, reference, Err(e.to_string()));
                }
                continue;
            }
        };
        match sheaf_engine::xlsx::read_cells(&bytes, &refs) {
            Ok(values) => {
                for (reference, v) in refs.iter().zip(values) {
                    ext.set_cell(
                        book,
                        reference,
                        v.map_err(|e| format!("workbook `{book}`, {e}")),
                    );
                }
            }
            Err(e) => {
                for reference in refs {
                    ext.set_cell(book, reference, Err(format!("workbook `{book}`: {e}")));
                }
            }
        }
    }
    ext
}
