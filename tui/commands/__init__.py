"""One module per `slopetune` sub-command; each defines `register(subparsers)`.

`register` adds its parser and sets `func=run` where `run(args) -> int` is the exit code.
"""

COMMANDS = ("report", "measure", "walk", "plan", "compare", "headings")
