"""The built-in mask library: one TOML file per rule set (data only)."""
