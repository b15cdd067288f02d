//! Generator of tidetally's invented demo coastline (under construction).

fn main() {}
