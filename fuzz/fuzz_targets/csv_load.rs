//! Fuzz target: the CSV loader never panics on any bytes, and a dataset it
//! loads is consistent (every stored column has one value per row).
#![no_main]

use causeway::data::{Dataset, ReadOptions};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(d) = Dataset::read(data, "fuzz.csv", &ReadOptions::default()) else {
        return;
    };
    assert!(d.nrows() > 0, "a loaded dataset has rows");
    for name in d.names() {
        let c = d.column(name).expect("every column is kept");
        assert_eq!(c.len(), d.nrows(), "column {name}");
        for i in 0..c.len() {
            let _ = c.is_missing(i);
        }
        let _ = d.complete_cases(&[name.as_str()]);
    }
});
