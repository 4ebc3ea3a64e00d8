//! twistmode-fem (under construction).
#![deny(missing_docs)]
