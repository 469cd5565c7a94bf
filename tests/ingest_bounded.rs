//! Reading activity files is bounded: a huge file is refused from its size alone, a folder
//! named like an activity is refused, and a FIT file's header is checked before its body.
//!
//! The allocation counter below is this test binary's global allocator: it counts the bytes
//! allocated on the current thread, so each test measures only its own reads.

mod fit_common;

use std::alloc::{GlobalAlloc, Layout, System};
use std::cell::Cell;

use splitdesk::ingest::{self, IngestError, Limits};

struct Counting;

thread_local! {
    static ALLOCATED: Cell<u64> = const { Cell::new(0) };
}

// SAFETY: defers to the system allocator; only adds a thread-local counter.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let _ = ALLOCATED.try_with(|a| a.set(a.get() + layout.size() as u64));
        unsafe { System.alloc(layout) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) }
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let _ = ALLOCATED.try_with(|a| a.set(a.get() + new_size as u64));
        unsafe { System.realloc(ptr, layout, new_size) }
    }
}

#[global_allocator]
static COUNTING: Counting = Counting;

/// Bytes allocated on this thread while `f` runs.
fn allocated_by<T>(f: impl FnOnce() -> T) -> (T, u64) {
    let before = ALLOCATED.with(Cell::get);
    let out = f();
    (out, ALLOCATED.with(Cell::get) - before)
}

const GIB2: u64 = 2 * 1024 * 1024 * 1024;

#[test]
fn a_sparse_two_gigabyte_fit_file_is_refused_from_its_size_without_reading_it() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("run.fit");
    // A valid FIT header, then 2 GiB of holes: only the size can tell it apart.
    let good = splitdesk::demo::fit_writer::write(&fit_common::session(300, false));
    std::fs::write(&path, &good[..14]).unwrap();
    std::fs::File::options()
        .write(true)
        .open(&path)
        .unwrap()
        .set_len(GIB2)
        .unwrap();

    let (result, bytes) = allocated_by(|| ingest::ingest_file(&path, None));
    let err = result.unwrap_err();
    assert!(matches!(err, IngestError::Refused { .. }), "{err:?}");
    assert_eq!(
        err.to_string(),
        format!(
            "{}: file is 2.0 GiB (2147483648 bytes), above the 64.0 MiB limit for activity \
             files (raise [ingest] max_file_mb in config.toml to read it)",
            path.display()
        )
    );
    // Before the cap this read the whole file: 2 GiB of allocation (and seconds of I/O).
    assert!(bytes < 64 * 1024, "allocated {bytes} bytes");
}

#[test]
fn the_cap_is_configurable_and_applies_to_every_format() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("long.gpx");
    std::fs::write(&path, vec![b' '; 3 * 1024 * 1024]).unwrap();
    let err = ingest::read_activity(&path, Limits::from_mb(2)).unwrap_err();
    assert_eq!(
        err.reason(),
        "file is 3.0 MiB (3145728 bytes), above the 2.0 MiB limit for activity files \
         (raise [ingest] max_file_mb in config.toml to read it)"
    );
    // Under the cap the bytes come back whole.
    let bytes = ingest::read_activity(&path, Limits::from_mb(4)).unwrap();
    assert_eq!(bytes.len(), 3 * 1024 * 1024);
}

#[test]
fn a_folder_named_like_an_activity_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("run.fit");
    std::fs::create_dir(&path).unwrap();
    let err = ingest::read_activity(&path, Limits::default()).unwrap_err();
    assert_eq!(err.reason(), "a folder, not an activity file");
}

#[cfg(unix)]
#[test]
fn a_named_pipe_is_refused_without_blocking() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("run.tcx");
    let status = std::process::Command::new("mkfifo")
        .arg(&path)
        .status()
        .unwrap();
    assert!(status.success());
    // Opening a FIFO for reading would block until a writer comes; the stat refuses first.
    let err = ingest::read_activity(&path, Limits::default()).unwrap_err();
    assert_eq!(err.reason(), "not a regular file, not an activity file");
}

#[test]
fn a_fit_header_that_declares_more_data_than_the_file_holds_is_refused_after_14_bytes() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("run.fit");
    let mut bytes = splitdesk::demo::fit_writer::write(&fit_common::session(300, false));
    let len = bytes.len();
    // Declare a data size larger than the file (header CRC 0 = not computed).
    bytes[4..8].copy_from_slice(&((len as u32) * 2).to_le_bytes());
    bytes[12..14].copy_from_slice(&[0, 0]);
    std::fs::write(&path, &bytes).unwrap();
    let (result, allocated) = allocated_by(|| ingest::read_activity(&path, Limits::default()));
    let err = result.unwrap_err();
    assert_eq!(
        err.reason(),
        format!(
            "FIT: truncated: header declares {} data bytes, file has {}",
            len * 2,
            len - 14
        )
    );
    // The body was never read into memory.
    assert!(allocated < len as u64, "allocated {allocated} of {len}");

    // A file named .fit without the signature stops at the header too.
    std::fs::write(&path, b"<?xml version=\"1.0\"?><gpx></gpx>").unwrap();
    let err = ingest::read_activity(&path, Limits::default()).unwrap_err();
    assert_eq!(err.reason(), "FIT: bad header size 60 (expected 12 or 14)");
}

#[test]
fn a_good_fit_file_reads_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("run.fit");
    let bytes = splitdesk::demo::fit_writer::write(&fit_common::session(300, false));
    std::fs::write(&path, &bytes).unwrap();
    assert_eq!(
        ingest::read_activity(&path, Limits::default()).unwrap(),
        bytes
    );
}
