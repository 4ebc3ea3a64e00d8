//! Command-line arguments of the eigen examples: a positional size and `--flag [value]`.

/// The arguments after the program name.
pub struct Args(Vec<String>);

impl Args {
    /// This process's arguments.
    pub fn from_env() -> Self {
        Self(std::env::args().skip(1).collect())
    }

    /// Whether `flag` was given.
    pub fn has(&self, flag: &str) -> bool {
        self.0.iter().any(|a| a == flag)
    }

    /// The value after `flag`, if given.
    pub fn value_of(&self, flag: &str) -> Option<String> {
        let at = self.0.iter().position(|a| a == flag)?;
        self.0.get(at + 1).cloned()
    }

    /// The first number that is not the value of one of `valued` flags.
    pub fn size(&self, valued: &[&str]) -> Option<usize> {
        let a = &self.0;
        (0..a.len())
            .filter(|&i| i == 0 || !valued.contains(&a[i - 1].as_str()))
            .find_map(|i| a[i].parse().ok())
    }
}
