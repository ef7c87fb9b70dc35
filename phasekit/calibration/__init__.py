"""Calibration of the database on published measurements: the reference set, the regression that
writes the fitted rows, and the validation report."""
