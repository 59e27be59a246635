//! Unit tests for the block cache's sealed entries.

use super::*;
use crate::outcome::BlockResult;

fn power_result() -> Option<BlockResult> {
    let doc = crate::doc::parse_document(
        "t.md",
        "```power\nid: plan\ngroups: 3\neffect: 0.4\npower: 0.8\n```\n".into(),
    )
    .ok()?;
    let block = doc.blocks.first()?;
    let crate::doc::BlockSpec::Power(spec) = &block.spec else {
        return None;
    };
    Some(BlockResult::Power(crate::analysis::run_power(
        &doc, block, spec,
    )))
}

#[test]
fn an_entry_opens_only_under_its_own_key() {
    let key = "a".repeat(64);
    let result = power_result().expect("a power block");
    let entry = seal(&key, &result).expect("sealed");
    assert!(open::<BlockResult>(&key, &entry).is_some());
    assert!(open::<BlockResult>(&"b".repeat(64), &entry).is_none());
    assert!(open::<BlockResult>(&key, &entry[..entry.len() - 1]).is_none());
    assert!(open::<BlockResult>(&key, b"").is_none());
}

#[test]
fn entry_names_are_lowercase_hex_digests() {
    assert!(is_entry_name(&"0f".repeat(32)));
    assert!(!is_entry_name(&"0F".repeat(32)));
    assert!(!is_entry_name("lock"));
    assert!(!is_entry_name(&"0".repeat(63)));
}
