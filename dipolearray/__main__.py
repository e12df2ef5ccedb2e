"""``python -m dipolearray``: the command line."""

from .cli._main import entry

if __name__ == "__main__":
    entry()
