"""Shipped data tables (TOML). Each file opens with a ``[table]`` header naming its source."""
