"""One module per command; each turns parsed arguments into results and views."""
