"""Collect the benchmark scripts (bench_*.py) when `pytest tests/benchmarks` runs."""

import pytest


def pytest_collect_file(file_path, parent):
    # Files named on the command line are collected by pytest itself already.
    if (file_path.suffix == ".py" and file_path.name.startswith("bench_")
            and not parent.session.isinitpath(file_path)):
        return pytest.Module.from_parent(parent, path=file_path)
    return None
