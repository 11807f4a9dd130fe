"""Console views: small rich renderables fed with finished results.

Each view stores its inputs and only yields output in ``__rich_console__``; it never
computes what it shows.  The command line builds one Console and prints views to it.
"""
