"""Stage 5: backends that write files from the resolved model and the parts."""
