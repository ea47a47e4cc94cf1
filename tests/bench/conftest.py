"""The benchmark scripts in this folder are run by hand, not collected as tests (their generator is tested by test_bench_generator.py)."""
collect_ignore = ["gen_decks.py", "run_bench.py", "run_audit_bench.py", "layouts.py", "gen_layouts.py", "run_layouts.py"]
