"""Scalewright: scale the numeric columns of a table and keep every fitted parameter."""

__version__ = "0.1.0"
