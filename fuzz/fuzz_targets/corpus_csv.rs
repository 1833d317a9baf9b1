//! Fuzz the corpus reader in its CSV layout: the rows after a fixed header
//! line `id,text,lang`, or (an input starting with `#`) the rest of the
//! input with its own header.
#![no_main]
use libfuzzer_sys::fuzz_target;
use postassay_fuzz::{check_error, input_file};

fuzz_target!(|data: &[u8]| {
    // First byte chooses between a fixed header and the input's own (which
    // then must not start with `{`, or the JSON Lines target covers it).
    let (prefix, rest): (&[u8], &[u8]) = match data.split_first() {
        Some((b'#', rest)) => (b"", rest),
        _ => (b"id,text,lang\n", data),
    };
    if rest.first() == Some(&b'{') && prefix.is_empty() {
        return;
    }
    let path = input_file("posts.csv", prefix, rest);
    check_error(&postassay::input::read_corpus(&path));
});
