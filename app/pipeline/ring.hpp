// A lock-free single-producer / single-consumer ring of preallocated slots.
//
// The producer claims the next free slot, fills it in place and publishes it; the consumer peeks at the oldest
// published slot, uses it in place and releases it. Nothing is copied or allocated after construction: the slots
// (e.g. sample blocks with their buffers) are made once. One thread may produce and one other thread may consume;
// head and tail sit on their own cache lines so the two do not false-share.
#pragma once

#include <atomic>
#include <cstddef>
#include <new>
#include <vector>

namespace hb {

template <class T>
class SpscRing {
  public:
    // capacity slots, each a copy of `prototype` (a block with its buffer sized, say).
    SpscRing(std::size_t capacity, const T& prototype) : slots_(capacity, prototype) {}
    SpscRing(const SpscRing&) = delete;
    SpscRing& operator=(const SpscRing&) = delete;

    std::size_t capacity() const { return slots_.size(); }

    // Producer: the slot to fill, or nullptr when the ring is full.
    T* claim() {
        const std::size_t t = tail_.load(std::memory_order_relaxed);
        if (t - head_.load(std::memory_order_acquire) >= slots_.size()) return nullptr;
        return &slots_[t % slots_.size()];
    }
    // Producer: makes the claimed slot visible to the consumer.
    void publish() { tail_.store(tail_.load(std::memory_order_relaxed) + 1, std::memory_order_release); }

    // Consumer: the oldest published slot, or nullptr when the ring is empty.
    T* peek() {
        const std::size_t h = head_.load(std::memory_order_relaxed);
        if (h == tail_.load(std::memory_order_acquire)) return nullptr;
        return &slots_[h % slots_.size()];
    }
    // Consumer: hands the peeked slot back to the producer.
    void release() { head_.store(head_.load(std::memory_order_relaxed) + 1, std::memory_order_release); }

    // Published slots not yet released (a snapshot; exact only from the consumer's side).
    std::size_t size() const { return tail_.load(std::memory_order_acquire) - head_.load(std::memory_order_acquire); }

  private:
    static constexpr std::size_t kLine = 64;
    std::vector<T> slots_;
    alignas(kLine) std::atomic<std::size_t> head_{0};  // next slot to consume
    alignas(kLine) std::atomic<std::size_t> tail_{0};  // next slot to produce
};

}  // namespace hb
