//! PNG plots (todo).
