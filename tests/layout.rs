//! The crate's layering, checked on the source text: `report` is a sink
//! (only the binary renders documents), so no library module outside
//! `src/report/` may import it; otherwise analysis starts to depend on
//! presentation and the import cycle this rule removed comes back.
//! `src/api.rs` (the entry points of embedding programs, which build the
//! documents as the binary does) stands above `report` like the binary:
//! it may import `report`, and no library module may import it.

use std::fs;
use std::path::Path;

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in fs::read_dir(dir).expect("src/ is readable") {
        let path = entry.expect("a directory entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn no_library_module_imports_report() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    assert!(files.len() > 20, "found only {} source files", files.len());
    let mut offenders = Vec::new();
    for path in files {
        let relative = path.strip_prefix(&src).unwrap();
        let first = relative.components().next().unwrap().as_os_str();
        if first == "report" || first == "cli" || first == "main.rs" {
            continue;
        }
        let text = fs::read_to_string(&path).unwrap();
        if first != "api.rs" && first != "lib.rs" {
            for (n, line) in text.lines().enumerate() {
                let code = line.trim_start();
                if !code.starts_with("//") && code.contains("crate::api") {
                    offenders.push(format!("src/{}:{}: {}", relative.display(), n + 1, code));
                }
            }
        }
        if first == "api.rs" {
            continue;
        }
        for (n, line) in text.lines().enumerate() {
            let code = line.trim_start();
            if code.starts_with("//") {
                continue;
            }
            if code.contains("crate::report") || code.contains("super::report") {
                offenders.push(format!("src/{}:{}: {}", relative.display(), n + 1, code));
            }
        }
    }
    assert!(
        offenders.is_empty(),
        "report (or api) imported by:\n{}",
        offenders.join("\n")
    );
}
