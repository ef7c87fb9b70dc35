"""The ``phasekit`` command line."""
