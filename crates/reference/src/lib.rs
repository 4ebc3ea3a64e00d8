//! twistmode-reference (under construction).
#![deny(missing_docs)]
