//! A big roster for benches: the demo athletes copied under new ids into a temporary folder
//! (hard links where the file system allows, else copies).

use std::path::{Path, PathBuf};

fn copy_tree(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).expect("create bench folder");
    for entry in std::fs::read_dir(from).expect("read demo folder") {
        let entry = entry.expect("demo entry");
        let src = entry.path();
        let dst = to.join(entry.file_name());
        if src.is_dir() {
            copy_tree(&src, &dst);
        } else if std::fs::hard_link(&src, &dst).is_err() {
            std::fs::copy(&src, &dst).expect("copy demo file");
        }
    }
}

/// The demo athletes copied `copies` times each under new ids into `root`.
pub fn copied_roster(root: &Path, copies: usize) -> PathBuf {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-athletes");
    let roster = root.join("roster");
    std::fs::create_dir_all(&roster).expect("create roster");
    std::fs::copy(demo.join("roster.toml"), roster.join("roster.toml")).expect("roster.toml");
    for entry in std::fs::read_dir(&demo).expect("read demo roster") {
        let entry = entry.expect("demo entry");
        if !entry.path().is_dir() {
            continue;
        }
        let name = entry.file_name().to_string_lossy().into_owned();
        for c in 1..=copies {
            copy_tree(&entry.path(), &roster.join(format!("{name}-c{c}")));
        }
    }
    roster
}
