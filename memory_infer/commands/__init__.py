"""One module per command of ``memory-infer``; each has ``add_arguments(parser)`` and ``run(args)``."""
