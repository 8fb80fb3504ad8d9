#include "pipeline/sha256.hpp"

#include <gtest/gtest.h>

#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

// FIPS 180-2, Appendix B.1 and B.2: the one-block and multi-block examples.
TEST(Sha256, MatchesTheFips180ExampleDigests) {
  EXPECT_EQ(sha256_hex("abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  EXPECT_EQ(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}

TEST(Sha256, HashesFilesLargerThanOneReadBuffer) {
  testing::ScratchDir dir;
  std::string big(200000, 'a');
  auto p = dir.write("big.bin", big);
  EXPECT_EQ(sha256_file(p), sha256_hex(big));
}

}  // namespace
}  // namespace stallscope
