"""``hazlint lsp``: run the language server over stdio for an editor."""
from __future__ import annotations

import logging
import os
import sys


def add_arguments(parser) -> None:
    parser.add_argument("--debounce", type=float, default=0.4, metavar="SECONDS",
                        help="wait this long after the last edit before linting (default 0.4)")
    parser.add_argument("--log-file", metavar="FILE",
                        help="write the server's log here (default: stderr, warnings only)")


def run(args) -> int:
    from ..lsp import create_server
    from ..lsp_framing import FramedReader, LockedWriter

    if args.log_file:
        logging.basicConfig(filename=args.log_file, level=logging.INFO)
    else:
        logging.basicConfig(stream=sys.stderr, level=logging.WARNING)
    # The protocol owns stdout. Anything else that prints (a parser generator, a subprocess,
    # a stray print) would corrupt the message stream, so the protocol gets a private copy of
    # the stdout descriptor and descriptor 1 is pointed at stderr for everyone else.
    sys.stdout.flush()
    proto_out = os.fdopen(os.dup(1), "wb", buffering=0)
    os.dup2(2, 1)
    sys.stdout = sys.stderr
    server = create_server(debounce=args.debounce)
    # our own framing in front of pygls' reader: a malformed frame costs only itself
    out = LockedWriter(proto_out)
    server.start_io(FramedReader(sys.stdin.buffer, answer=out.write), out)
    return 0
