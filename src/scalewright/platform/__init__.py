"""Scaling where the data lives: SQL for data platforms (sqlglot) and files larger than
memory (DuckDB, embedded). No Qt; sqlglot and duckdb are imported by the modules that need
them, so ``import scalewright.platform`` stays light.
"""
