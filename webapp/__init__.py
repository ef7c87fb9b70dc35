"""The phasekit Dash application (see webapp/app.py)."""
