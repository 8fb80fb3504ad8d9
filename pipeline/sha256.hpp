#pragma once
// SHA-256 through OpenSSL's EVP interface (FIPS 180-4), as lower-case hex.
#include <filesystem>
#include <string>
#include <string_view>

namespace stallscope {

std::string sha256_hex(std::string_view bytes);
// Streams the file; throws InputError if it cannot be read.
std::string sha256_file(const std::filesystem::path& path);

}  // namespace stallscope
