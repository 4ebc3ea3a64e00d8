//! twistmode-io (under construction).
#![deny(missing_docs)]
