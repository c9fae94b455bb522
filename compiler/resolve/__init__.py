"""Stage 3: spec -> resolved model (the IR), one module per instrument family."""
