from checker.cli import run

run()
