"""Benchmarks run by ``make bench``; each module has a ``run()`` that prints its figures."""
