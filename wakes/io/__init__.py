"""Files in and out: CSV tables (polars in, results out) and JSON summaries."""

from .tables import read_numeric_table, write_json, write_table

__all__ = ["read_numeric_table", "write_json", "write_table"]
