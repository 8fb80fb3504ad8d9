stallscope_bench(bench_gk_fit gk_fit_bench.cpp)
