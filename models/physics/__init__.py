"""The physical topics: one module per topic, one function per published formula."""
