//! Hover readouts: the text lives in `nivalis_charts::readout`, shared with the
//! CLI and the Python module; the page only forwards its pointer there.

pub use nivalis_charts::readout::*;
