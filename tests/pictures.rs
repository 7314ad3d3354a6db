//! The README's pictures are current: `scripts/pictures.sh` draws them
//! again with this build into a temporary directory, and each must equal
//! the committed file in docs/ byte for byte (after a change to a plot,
//! run `CANONODE=target/release/canonode bash scripts/pictures.sh`).

#[test]
fn the_readme_pictures_are_current() {
    let dir = std::env::temp_dir().join(format!("canonode-pictures-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let o = std::process::Command::new("bash")
        .arg("scripts/pictures.sh")
        .arg(&dir)
        .env("CANONODE", env!("CARGO_BIN_EXE_canonode"))
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("bash runs");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let mut stale = Vec::new();
    for name in [
        "demo_scan.svg",
        "demo_scan.png",
        "demo_map.svg",
        "demo_map.png",
        "demo_cross_section.svg",
        "demo_cross_section.png",
        "demo_modes.svg",
        "demo_modes.png",
    ] {
        let drawn = std::fs::read(dir.join(name)).unwrap();
        let committed = std::fs::read(std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("docs").join(name)).unwrap_or_default();
        if drawn != committed {
            stale.push(name);
        }
    }
    std::fs::remove_dir_all(&dir).ok();
    assert!(stale.is_empty(), "stale pictures in docs/: {stale:?} (run CANONODE=target/release/canonode bash scripts/pictures.sh)");
}
