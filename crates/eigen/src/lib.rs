//! twistmode-eigen (under construction).
#![deny(missing_docs)]
