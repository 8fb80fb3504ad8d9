#include "pipeline/sha256.hpp"

#include <openssl/evp.h>

#include <array>
#include <fstream>
#include <memory>
#include <stdexcept>

#include "pipeline/errors.hpp"

namespace stallscope {

namespace {

struct Digest {
  std::unique_ptr<EVP_MD_CTX, decltype(&EVP_MD_CTX_free)> ctx{EVP_MD_CTX_new(), &EVP_MD_CTX_free};
  Digest() {
    if (!ctx || EVP_DigestInit_ex(ctx.get(), EVP_sha256(), nullptr) != 1)
      throw std::logic_error("OpenSSL could not start a SHA-256 digest");
  }
  void update(const void* data, std::size_t n) {
    if (EVP_DigestUpdate(ctx.get(), data, n) != 1) throw std::logic_error("OpenSSL SHA-256 update failed");
  }
  std::string hex() {
    std::array<unsigned char, EVP_MAX_MD_SIZE> md{};
    unsigned int len = 0;
    if (EVP_DigestFinal_ex(ctx.get(), md.data(), &len) != 1) throw std::logic_error("OpenSSL SHA-256 final failed");
    static constexpr char kHex[] = "0123456789abcdef";
    std::string out;
    for (unsigned int i = 0; i < len; ++i) {
      out += kHex[md[i] >> 4];
      out += kHex[md[i] & 15];
    }
    return out;
  }
};

}  // namespace

std::string sha256_hex(std::string_view bytes) {
  Digest d;
  d.update(bytes.data(), bytes.size());
  return d.hex();
}

std::string sha256_file(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), "cannot be read for hashing");
  Digest d;
  std::array<char, 1 << 16> buf;
  while (in) {
    in.read(buf.data(), buf.size());
    if (in.gcount() > 0) d.update(buf.data(), static_cast<std::size_t>(in.gcount()));
  }
  if (in.bad()) throw InputError(path.string(), "read error while hashing");
  return d.hex();
}

}  // namespace stallscope
