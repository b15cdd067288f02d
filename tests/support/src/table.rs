//! A CSV body read with the general-purpose `csv` crate (RFC 4180) into its header and its
//! records as strings, for tests that compare a served table with the JSON it came from.

/// The header and the records of `bytes`; a malformed table fails the test.
pub fn csv_table(bytes: &[u8]) -> (Vec<String>, Vec<Vec<String>>) {
    let mut reader = csv::Reader::from_reader(bytes);
    let header = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_owned)
        .collect();
    let rows = reader
        .records()
        .map(|r| r.unwrap().iter().map(str::to_owned).collect())
        .collect();
    (header, rows)
}
