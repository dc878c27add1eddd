"""Speed benchmark of lumped, run apart from the test suite: ``python -m tests.benchmarks``.

See README.md beside this file.  pytest does not collect this folder.
"""
