//! Copying inside tmux: the text also goes to `tmux load-buffer -w -` (on stdin), and the
//! report says what was actually done. A fake `tmux` on `PATH` records its arguments and
//! stdin. This binary holds one test: it changes the process environment.

use std::path::Path;

use splitdesk::export::clipboard::{copy, osc52};

/// A fake `tmux` that appends its arguments to `args.txt` and its stdin to `stdin-N.txt`,
/// then exits with `code` (with `-w` among the arguments: `code_w`).
fn fake_tmux(dir: &Path, code: i32, code_w: i32) {
    let script = format!(
        "#!/bin/sh\n\
         n=$(wc -l < '{d}/args.txt' 2>/dev/null || echo 0)\n\
         echo \"$*\" >> '{d}/args.txt'\n\
         cat > '{d}/stdin-'$n'.txt'\n\
         case \" $* \" in *' -w '*) exit {code_w};; esac\n\
         exit {code}\n",
        d = dir.display()
    );
    let path = dir.join("tmux");
    std::fs::write(&path, script).unwrap();
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o755)).unwrap();
    let _ = std::fs::remove_file(dir.join("args.txt"));
}

fn args(dir: &Path) -> Vec<String> {
    std::fs::read_to_string(dir.join("args.txt"))
        .map(|s| s.lines().map(String::from).collect())
        .unwrap_or_default()
}

#[test]
fn inside_tmux_the_text_goes_to_tmux_and_the_report_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let bin = dir.path();
    // The fake tools come first; no display for a native helper.
    let path = format!("{}:/usr/bin:/bin", bin.display());
    std::env::set_var("PATH", path);
    std::env::remove_var("DISPLAY");
    std::env::remove_var("WAYLAND_DISPLAY");
    let text = "Good session.\nKeep the jogs easy — ünïcode too.\n";

    // Inside tmux: OSC 52 to the terminal and `load-buffer -w -` with the text on stdin.
    fake_tmux(bin, 0, 0);
    std::env::set_var("TMUX", "/tmp/tmux-1000/default,1234,0");
    let mut term = Vec::new();
    let r = copy(text, &mut term);
    assert_eq!(String::from_utf8(term).unwrap(), osc52(text));
    assert_eq!(args(bin), vec!["load-buffer -w -"]);
    assert_eq!(
        std::fs::read_to_string(bin.join("stdin-0.txt")).unwrap(),
        text
    );
    assert!(r.tmux && r.osc52 && r.native.is_none());
    assert_eq!(
        r.to_string(),
        "put in tmux's buffer and sent to the terminal (OSC 52)"
    );
    assert!(!r.copied());

    // A tmux without -w (before 3.2): the plain load-buffer.
    fake_tmux(bin, 0, 1);
    let r = copy(text, &mut Vec::new());
    assert_eq!(args(bin), vec!["load-buffer -w -", "load-buffer -"]);
    assert_eq!(
        std::fs::read_to_string(bin.join("stdin-1.txt")).unwrap(),
        text
    );
    assert!(r.tmux);

    // tmux refuses both: the report does not claim the buffer.
    fake_tmux(bin, 1, 1);
    let r = copy(text, &mut Vec::new());
    assert_eq!(args(bin).len(), 2);
    assert!(!r.tmux);
    assert_eq!(r.to_string(), "sent to the terminal (OSC 52)");

    // Outside tmux: tmux is not asked; the terminal escape is all, and it is not "copied".
    fake_tmux(bin, 0, 0);
    std::env::remove_var("TMUX");
    let r = copy(text, &mut Vec::new());
    assert!(args(bin).is_empty());
    assert_eq!(r.to_string(), "sent to the terminal (OSC 52)");
    assert!(!r.to_string().contains("copied"));

    // A native helper (a fake xclip under X11) is what copies.
    let xclip = bin.join("xclip");
    std::fs::write(&xclip, "#!/bin/sh\ncat > /dev/null\n").unwrap();
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(&xclip, std::fs::Permissions::from_mode(0o755)).unwrap();
    std::env::set_var("DISPLAY", ":0");
    let r = copy(text, &mut Vec::new());
    assert_eq!(
        r.to_string(),
        "copied with xclip and sent to the terminal (OSC 52)"
    );
    assert!(r.copied());
}
