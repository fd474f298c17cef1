//! Reading the workbook cells a worksheet asks for (`cell()` calls), before
//! the engine checks it. Paths are relative to the worksheet's folder.

use std::collections::BTreeMap;
use std::path::Path;

use sheaf_engine::{CellRequest, Externals};

/// Read every requested cell, each workbook once; failures become messages
/// the checker shows at the call.
pub fn read_cells(dir: &Path, requests: &[CellRequest]) -> Externals {
    let mut ext = Externals::none();
    let mut by_book: BTreeMap<&str, Vec<&str>> = BTreeMap::new();
    for r in requests {
        let refs = by_book.entry(r.book.as_str()).or_default();
        if !refs.contains(&r.reference.as_str()) {
            refs.push(r.reference.as_str());
        }
    }
    for (book, refs) in by_book {
        let path = dir.join(book);
        for reference in refs {
            let value = sheaf_engine::xlsx::read_cell(&path, reference);
            ext.set_cell(book, reference, value);
        }
    }
    ext
}
