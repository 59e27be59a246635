//! Unit tests for `results`.

#[test]
fn sha256_of_abc() {
    // Source: FIPS 180-2, appendix B.1 test vector for "abc".
    assert_eq!(
        super::sha256_hex(b"abc"),
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    );
}
