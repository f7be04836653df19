"""Command line (placeholder until the CLI lands)."""


def main() -> None:
    raise SystemExit("notegen: the command line is not wired yet")
