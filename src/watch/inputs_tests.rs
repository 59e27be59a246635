use super::*;
use notify::event::{CreateKind, DataChange, RemoveKind, RenameMode};

fn event(kind: EventKind, path: &Path) -> notify::Result<notify::Event> {
    Ok(notify::Event::new(kind).add_path(path.to_path_buf()))
}

fn followed(paths: &[&Path]) -> Inputs {
    let mut inputs = Inputs::default();
    for p in paths {
        inputs.follow(p, content_hash(p));
    }
    inputs
}

#[test]
fn only_events_that_can_change_content_count() {
    use EventKind::{Access, Create, Modify, Remove};
    for kind in [
        Access(AccessKind::Open(AccessMode::Any)),
        Access(AccessKind::Read),
        Access(AccessKind::Close(AccessMode::Read)),
        Modify(ModifyKind::Metadata(MetadataKind::AccessTime)),
        Modify(ModifyKind::Metadata(MetadataKind::Permissions)),
        Modify(ModifyKind::Metadata(MetadataKind::Any)),
    ] {
        assert!(!can_change_content(&kind), "{kind:?}");
    }
    for kind in [
        Access(AccessKind::Close(AccessMode::Write)),
        Modify(ModifyKind::Data(DataChange::Any)),
        Modify(ModifyKind::Name(RenameMode::To)),
        Modify(ModifyKind::Metadata(MetadataKind::WriteTime)),
        Create(CreateKind::File),
        Remove(RemoveKind::File),
    ] {
        assert!(can_change_content(&kind), "{kind:?}");
    }
}

#[test]
fn the_hash_is_the_sha256_of_the_content() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path().join("d.csv");
    // Larger than one read, so the pieces are joined correctly.
    let bytes: Vec<u8> = (0..200_000u32).map(|i| (i % 251) as u8).collect();
    std::fs::write(&p, &bytes).expect("write");
    assert_eq!(
        content_hash(&p),
        Some(crate::provenance::sha256_hex(&bytes))
    );
    assert_eq!(content_hash(&dir.path().join("missing.csv")), None);
    assert_eq!(content_hash(dir.path()), None, "a folder is not hashed");
}

/// A FIFO with no writer: opening it for reading the ordinary way waits for
/// ever. The hash must say "not a regular file" at once instead.
#[cfg(unix)]
#[test]
fn a_fifo_is_never_opened_for_reading() {
    let dir = tempfile::tempdir().expect("temp dir");
    let fifo = dir.path().join("pipe.csv");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .expect("mkfifo runs");
    assert!(made.success());
    assert_eq!(content_hash(&fifo), None);
    // Also when the link resolves to it, and through the open itself.
    let link = dir.path().join("link.csv");
    std::os::unix::fs::symlink(&fifo, &link).expect("link");
    assert_eq!(content_hash(&link), None);
    assert!(open_without_waiting(&fifo).is_ok());
}

#[test]
fn reads_and_opens_touch_nothing_and_writes_touch_their_file() {
    let dir = tempfile::tempdir().expect("temp dir");
    let doc = dir.path().join("report.md");
    let data = dir.path().join("d.csv");
    std::fs::write(&doc, "text").expect("doc");
    std::fs::write(&data, "y\n1\n").expect("data");
    let inputs = followed(&[&doc, &data]);
    let open = EventKind::Access(AccessKind::Open(AccessMode::Any));
    assert!(inputs.touched_by(&event(open, &data)).is_empty());
    let write = EventKind::Modify(ModifyKind::Data(DataChange::Content));
    assert_eq!(inputs.touched_by(&event(write, &data)), BTreeSet::from([1]));
    let other = dir.path().join("report.html");
    assert!(inputs.touched_by(&event(write, &other)).is_empty());
    // A removed file is still matched by its folder and name.
    std::fs::remove_file(&doc).expect("remove");
    let removed = EventKind::Remove(RemoveKind::File);
    assert_eq!(
        inputs.touched_by(&event(removed, &doc)),
        BTreeSet::from([0])
    );
    assert!(
        inputs
            .touched_by(&Err(notify::Error::generic("x")))
            .is_empty()
    );
}

#[cfg(unix)]
#[test]
fn a_link_is_followed_through_its_target_too() {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::create_dir(dir.path().join("shared")).expect("dir");
    let target = dir.path().join("shared/master.csv");
    std::fs::write(&target, "y\n1\n").expect("data");
    let link = dir.path().join("d.csv");
    std::os::unix::fs::symlink(&target, &link).expect("link");
    let inputs = followed(&[&link]);
    let write = EventKind::Modify(ModifyKind::Data(DataChange::Content));
    assert_eq!(
        inputs.touched_by(&event(write, &target)),
        BTreeSet::from([0])
    );
    assert_eq!(inputs.folders().len(), 2);
}

#[test]
fn identical_bytes_are_no_change() {
    let dir = tempfile::tempdir().expect("temp dir");
    let data = dir.path().join("d.csv");
    std::fs::write(&data, "y\n1\n").expect("data");
    let mut inputs = followed(&[&data]);
    let all = BTreeSet::from([0]);
    std::fs::write(&data, "y\n1\n").expect("same bytes");
    assert!(!inputs.content_changed(&all));
    std::fs::write(&data, "y\n2\n").expect("new bytes");
    assert!(inputs.content_changed(&all));
    assert!(!inputs.content_changed(&all), "the new content is recorded");
    std::fs::remove_file(&data).expect("remove");
    assert!(inputs.content_changed(&all), "a removal is a change");
}

#[test]
fn a_failed_build_keeps_following_earlier_files_and_the_one_in_error() {
    let dir = tempfile::tempdir().expect("temp dir");
    let doc = dir.path().join("report.md");
    let data = dir.path().join("d.csv");
    let broken = dir.path().join("e.csv");
    for p in [&doc, &data, &broken] {
        std::fs::write(p, "x").expect("write");
    }
    let before = followed(&[&doc, &data]);
    let after = Inputs::after_build(&doc, None, Some(&broken), &before);
    let paths: Vec<&Path> = after.files.iter().map(|f| f.path.as_path()).collect();
    assert_eq!(paths, [doc.as_path(), data.as_path(), broken.as_path()]);
    assert!(after.files.iter().all(|f| f.hash.is_some()));
}
