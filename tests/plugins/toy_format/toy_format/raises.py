"""A format whose writer fails (a bug in a plugin): hazlint must name it, not crash."""

NAME = "toy-raises"
SUMMARY = "always fails while writing (example of a broken plugin)"


def write(result, stream, options) -> None:
    stream.write("partial\n")
    raise ValueError("toy plugin bug")
