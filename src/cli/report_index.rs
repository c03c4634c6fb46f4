//! `catena report DIR -o OUT`: one report per spec under DIR and an index.

use std::path::Path;

use super::files::collect;
use super::report::{report_status, write_rendered};
use super::{EXIT_OK, EXIT_USAGE};
use crate::emit::report::{index, Report, ReportFormat};
use crate::emit::write_atomic;

pub fn run_folder(
    folder: &Path,
    output: Option<&Path>,
    format: ReportFormat,
    build: &dyn Fn(&Path) -> Result<Report, u8>,
) -> u8 {
    let Some(out) = output else {
        errln!("catena: a report of a folder needs `-o DIR` for its reports and index");
        return EXIT_USAGE;
    };
    let files = match collect(&[folder.to_path_buf()]) {
        Ok(f) => f,
        Err(e) => {
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    if let Err(e) = std::fs::create_dir_all(out) {
        errln!("catena: {}: {e}", out.display());
        return EXIT_USAGE;
    }
    let mut status = EXIT_OK;
    let mut entries = Vec::new();
    for path in &files {
        let stem = report_stem(folder, path);
        let report = match build(path) {
            Ok(r) => r,
            Err(s) => {
                status = status.max(s);
                entries.push(index::Entry::failed(&path.to_string_lossy()));
                continue;
            }
        };
        status = status.max(report_status(&report));
        let file = out.join(format!("{stem}.{}", format.extension()));
        if let Err(e) = write_rendered(&report, format, &file, out, &stem) {
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
        entries.push(index::Entry::of(
            &report,
            &format!("{stem}.{}", format.extension()),
        ));
    }
    let text = index::render(&entries, format);
    let path = out.join(format!("index.{}", format.extension()));
    if let Err(e) = write_atomic(&path, text.as_bytes()) {
        errln!("catena: {}: {e}", path.display());
        return EXIT_USAGE;
    }
    status
}

/// A report's file name from the spec's path under the folder, so specs
/// of one name in two subfolders do not collide: `sub/oven.catena` →
/// `sub_oven`.
fn report_stem(folder: &Path, path: &Path) -> String {
    let rel = path.strip_prefix(folder).unwrap_or(path).with_extension("");
    rel.components()
        .map(|c| c.as_os_str().to_string_lossy().into_owned())
        .collect::<Vec<_>>()
        .join("_")
}
