"""boresmith: a spec-file compiler for wind pipes.

The pipeline, one sub-package a stage: ``spec`` (load and check the YAML),
``acoustics`` (pure physics), ``resolve`` (spec -> resolved model),
``geometry`` (resolved model -> parts in mm), ``emit`` (files), and ``cli``.
"""

__version__ = "0.1.0"

FORMAT_VERSION = 1
"""The newest spec format version this program reads (the spec's ``boresmith:`` key)."""
