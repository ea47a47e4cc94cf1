"""The benchmark scripts in this folder are run by hand, not collected as tests."""
collect_ignore = ["gen_decks.py", "run_bench.py"]
