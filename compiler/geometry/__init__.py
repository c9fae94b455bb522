"""Stage 4: resolved model -> parts in millimetres (flat patterns, templates, nesting)."""
