"""One local Spark session for the whole test run (starting Spark takes seconds)."""

from __future__ import annotations

import os

import pytest


@pytest.fixture(scope="session")
def spark():
    """A local Spark session (one per test run: starting Spark takes seconds)."""
    os.environ.setdefault("PYSPARK_PYTHON", "python3")
    from pyspark.sql import SparkSession

    session = (
        SparkSession.builder.master("local[1]")
        .appName("scalewright-tests")
        .config("spark.ui.enabled", "false")
        .config("spark.sql.shuffle.partitions", "1")
        .config("spark.default.parallelism", "1")
        .config("spark.driver.memory", "1g")
        .config("spark.sql.session.timeZone", "UTC")
        .config("spark.ui.showConsoleProgress", "false")
        .getOrCreate()
    )
    session.sparkContext.setLogLevel("ERROR")
    yield session
    session.stop()
