"""Subcommands of the ``tracer`` command line, one module each (see :mod:`tracer.cli`)."""
