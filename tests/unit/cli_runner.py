"""Running the command line inside a test: ``run`` gives (exit code, stdout, stderr), ``run_json`` the
parsed JSON output of a command that must succeed."""

import json

from phasekit.cli.main import main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def run_json(capsys, *argv):
    code, out, err = run(capsys, *argv, "--format", "json")
    assert code == 0, err
    return json.loads(out)
