"""Statistics for shapegauge: pure numpy/scipy over small frozen dataclasses.

Nothing in this package knows about Flask, JSON or marshmallow. Functions take
numpy arrays or the form types of :mod:`service.stats.forms` and return frozen
dataclasses whose field names are the names the API publishes.
"""
