#include <rastrum/errors.hpp>
#include <rastrum/sha256.hpp>

#include <openssl/evp.h>

#include <cstdio>
#include <fstream>
#include <memory>
#include <vector>

namespace rastrum {

namespace {

class digest {
public:
    digest(): ctx_(EVP_MD_CTX_new(), EVP_MD_CTX_free) {
        if (!ctx_ || EVP_DigestInit_ex(ctx_.get(), EVP_sha256(), nullptr) != 1) throw error("SHA-256 unavailable");
    }
    void add(const char* data, std::size_t size) { EVP_DigestUpdate(ctx_.get(), data, size); }
    std::string hex() {
        unsigned char bytes[EVP_MAX_MD_SIZE];
        unsigned int length = 0;
        EVP_DigestFinal_ex(ctx_.get(), bytes, &length);
        std::string text;
        char two[3];
        for (unsigned i = 0; i < length; ++i) {
            std::snprintf(two, sizeof two, "%02x", bytes[i]);
            text += two;
        }
        return text;
    }

private:
    std::unique_ptr<EVP_MD_CTX, decltype(&EVP_MD_CTX_free)> ctx_;
};

}  // namespace

std::string file_sha256(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw error("cannot read " + path);
    digest d;
    std::vector<char> buffer(1 << 20);
    while (in) {
        in.read(buffer.data(), static_cast<std::streamsize>(buffer.size()));
        const auto got = in.gcount();
        if (got > 0) d.add(buffer.data(), static_cast<std::size_t>(got));
    }
    if (in.bad()) throw error("cannot read " + path);
    return d.hex();
}

std::string text_sha256(const std::string& text) {
    digest d;
    d.add(text.data(), text.size());
    return d.hex();
}

}  // namespace rastrum
