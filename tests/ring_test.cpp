// The single-producer / single-consumer ring under concurrent load: sequence-numbered blocks arrive in order,
// none lost, none twice, with the payload the producer wrote; full and empty behave.
#include "pipeline/ring.hpp"

#include <gtest/gtest.h>

#include <thread>
#include <vector>

namespace hb {
namespace {

struct Item {
    std::uint64_t sequence = 0;
    std::vector<std::uint64_t> payload;
};

TEST(Ring, FullAndEmpty) {
    SpscRing<Item> r(4, Item{0, std::vector<std::uint64_t>(8)});
    EXPECT_EQ(r.peek(), nullptr);
    for (int i = 0; i < 4; ++i) {
        Item* s = r.claim();
        ASSERT_NE(s, nullptr);
        s->sequence = static_cast<std::uint64_t>(i);
        r.publish();
    }
    EXPECT_EQ(r.claim(), nullptr) << "a full ring refuses a fifth slot";
    EXPECT_EQ(r.size(), 4u);
    for (int i = 0; i < 4; ++i) {
        Item* s = r.peek();
        ASSERT_NE(s, nullptr);
        EXPECT_EQ(s->sequence, static_cast<std::uint64_t>(i));
        r.release();
    }
    EXPECT_EQ(r.peek(), nullptr);
    EXPECT_NE(r.claim(), nullptr);
}

TEST(Ring, ConcurrentLoadLosesAndDuplicatesNothing) {
    constexpr std::uint64_t kBlocks = 200000;
    constexpr std::size_t kPayload = 16;
    SpscRing<Item> r(8, Item{0, std::vector<std::uint64_t>(kPayload)});
    std::thread producer([&] {
        for (std::uint64_t seq = 0; seq < kBlocks;) {
            Item* s = r.claim();
            if (!s) {
                std::this_thread::yield();
                continue;
            }
            s->sequence = seq;
            for (std::size_t i = 0; i < kPayload; ++i) s->payload[i] = seq * 1000 + i;
            r.publish();
            ++seq;
        }
    });
    std::uint64_t expect = 0, bad_payload = 0;
    while (expect < kBlocks) {
        Item* s = r.peek();
        if (!s) {
            std::this_thread::yield();
            continue;
        }
        ASSERT_EQ(s->sequence, expect) << "out of order, lost or duplicated";
        for (std::size_t i = 0; i < kPayload; ++i) bad_payload += s->payload[i] != expect * 1000 + i;
        r.release();
        ++expect;
    }
    producer.join();
    EXPECT_EQ(bad_payload, 0u) << "the consumer saw a slot before the producer had finished writing it";
    EXPECT_EQ(r.peek(), nullptr);
}

}  // namespace
}  // namespace hb
