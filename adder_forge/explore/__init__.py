"""Exploring the design space: sweeps over widths and variants, Pareto fronts, plots, a report, `pick`.

The layer above synth: it builds, checks and measures adders through the layers below and never adds a
figure of its own (figures.py names the ones it reads). sweep.py reads sweep files, run.py runs the tasks
through an executor (executors.py) and the cache (cache.py), results.py turns the entries into rows and
fronts, job.py writes the output folder.
"""
