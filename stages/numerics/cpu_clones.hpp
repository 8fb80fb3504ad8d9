#pragma once
// STALLSCOPE_AVX2_CLONES before a hot loop's function builds it twice, for
// AVX2 and for any x86-64, the one to run chosen at load time. Without FMA
// contraction (ISO C++ mode) both give the same bits. Under the sanitizers,
// and off x86-64, the function is built once, portable.
#if defined(__x86_64__) && defined(__GNUC__) && !defined(__SANITIZE_ADDRESS__) && \
    !(defined(__has_feature) && __has_feature(address_sanitizer))
#define STALLSCOPE_AVX2_CLONES __attribute__((target_clones("avx2", "default")))
#else
#define STALLSCOPE_AVX2_CLONES
#endif
