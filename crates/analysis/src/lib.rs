//! twistmode-analysis (under construction).
#![deny(missing_docs)]
