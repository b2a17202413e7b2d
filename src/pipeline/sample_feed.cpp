#include "baroz/pipeline/sample_feed.hpp"

#include <atomic>
#include <condition_variable>
#include <deque>
#include <exception>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "baroz/io/sample_decoder.hpp"

namespace baroz {
namespace {

/// Reads and validates one record; shared by both feeds.
class FrontEnd {
 public:
  FrontEnd(RecordReader& reader, const ColumnMap& columns, bool decimal_comma,
           const ValidationOptions& validation)
      : reader_(reader),
        decoder_(columns, decimal_comma, reader.layout().format == LogFormat::kCsv),
        validator_(validation, decoder_.columns()) {}

  /// Reads the next record into `sample` (true) or `problem` (false);
  /// `end` is set at the end of the input.
  bool step(Sample& sample, RowProblem& problem, bool& end) {
    if (!reader_.next(record_)) {
      end = true;
      return false;
    }
    end = false;
    if (!decoder_.decode(record_, sample, problem)) return false;
    return validator_.check(sample, problem, record_.raw, record_.index);
  }

  FeedStats stats() const {
    FeedStats s;
    s.columns = decoder_.columns();
    s.absolute_time = decoder_.absolute_time();
    s.nominal_interval_ns = validator_.nominal_interval_ns();
    s.gaps = validator_.gaps();
    s.backwards = validator_.backwards();
    s.duplicates = validator_.duplicates();
    return s;
  }

 private:
  RecordReader& reader_;
  SampleDecoder decoder_;
  Validator validator_;
  Record record_;
};

class InlineFeed final : public SampleFeed {
 public:
  InlineFeed(RecordReader& reader, const ColumnMap& columns, bool decimal_comma,
             const ValidationOptions& validation)
      : front_(reader, columns, decimal_comma, validation) {}

  bool next(FeedItem& item) override {
    if (stopped_) return false;
    bool end = false;
    const bool ok = front_.step(sample_, problem_, end);
    if (end) return false;
    item.sample = ok ? &sample_ : nullptr;
    item.problem = ok ? nullptr : &problem_;
    return true;
  }
  void stop() override { stopped_ = true; }
  FeedStats stats() override { return front_.stats(); }

 private:
  FrontEnd front_;
  Sample sample_;
  RowProblem problem_;
  bool stopped_ = false;
};

/// A batch of items; rejected rows keep their position among the samples.
/// Batches are recycled, so their vectors and text arenas stop allocating
/// after warm-up.
struct Batch {
  std::vector<Sample> samples;
  std::string text;                     // time text, then raw record, of each sample
  std::vector<std::size_t> text_offset; // start of the time text
  std::vector<std::size_t> raw_offset;  // start of the raw record
  std::vector<RowProblem> problems;     // problems[k] comes before samples[problem_at[k]]
  std::vector<std::string> problem_raw; // owned copies of the raw records
  std::vector<std::size_t> problem_at;
  std::size_t used_problems = 0;
  void clear() {
    samples.clear();
    text.clear();
    text_offset.clear();
    raw_offset.clear();
    used_problems = 0;
    problem_at.clear();
  }
};

class ThreadedFeed final : public SampleFeed {
 public:
  static constexpr std::size_t kBatchSamples = 4096;
  static constexpr std::size_t kBatches = 4;

  ThreadedFeed(RecordReader& reader, const ColumnMap& columns, bool decimal_comma,
               const ValidationOptions& validation)
      : front_(reader, columns, decimal_comma, validation) {
    for (std::size_t i = 0; i < kBatches; ++i) free_.push_back(std::make_unique<Batch>());
    thread_ = std::thread([this] { produce(); });
  }
  ~ThreadedFeed() override {
    stop();
    if (thread_.joinable()) thread_.join();
  }

  bool next(FeedItem& item) override {
    for (;;) {
      if (current_) {
        Batch& b = *current_;
        if (next_problem_ < b.used_problems && b.problem_at[next_problem_] == next_sample_) {
          // The view is set here, not when produced: problem_raw may have
          // been reallocated (moving short strings) while the batch filled.
          RowProblem& p = b.problems[next_problem_];
          p.raw = b.problem_raw[next_problem_];
          ++next_problem_;
          item.sample = nullptr;
          item.problem = &p;
          return true;
        }
        if (next_sample_ < b.samples.size()) {
          Sample& s = b.samples[next_sample_];
          const std::size_t begin = b.text_offset[next_sample_];
          const std::size_t raw = b.raw_offset[next_sample_];
          const std::size_t end =
              next_sample_ + 1 < b.samples.size() ? b.text_offset[next_sample_ + 1] : b.text.size();
          s.time_text = std::string_view(b.text).substr(begin, raw - begin);
          s.raw = std::string_view(b.text).substr(raw, end - raw);
          ++next_sample_;
          item.sample = &s;
          item.problem = nullptr;
          return true;
        }
        release(std::move(current_));
      }
      std::unique_lock lock(mutex_);
      ready_cv_.wait(lock, [&] { return !ready_.empty() || finished_; });
      if (ready_.empty()) {
        if (error_) std::rethrow_exception(error_);
        return false;
      }
      current_ = std::move(ready_.front());
      ready_.pop_front();
      next_sample_ = 0;
      next_problem_ = 0;
    }
  }

  void stop() override {
    {
      std::lock_guard lock(mutex_);  // no lost wake-up between check and wait
      stop_requested_ = true;
    }
    free_cv_.notify_all();
  }

  FeedStats stats() override {
    if (thread_.joinable()) {
      stop();
      thread_.join();
    }
    return front_.stats();
  }

 private:
  void release(std::unique_ptr<Batch> b) {
    b->clear();
    {
      std::lock_guard lock(mutex_);
      free_.push_back(std::move(b));
    }
    free_cv_.notify_one();
  }

  void produce() {
    try {
      std::unique_ptr<Batch> b;
      Sample sample;
      RowProblem problem;
      bool end = false;
      while (!end && !stop_requested_) {
        {
          std::unique_lock lock(mutex_);
          free_cv_.wait(lock, [&] { return !free_.empty() || stop_requested_; });
          if (stop_requested_) break;
          b = std::move(free_.front());
          free_.pop_front();
        }
        while (b->samples.size() < kBatchSamples) {
          const bool ok = front_.step(sample, problem, end);
          if (end) break;
          if (ok) {
            b->text_offset.push_back(b->text.size());
            b->text.append(sample.time_text);
            b->raw_offset.push_back(b->text.size());
            b->text.append(sample.raw);
            b->samples.push_back(sample);
          } else {
            const std::size_t k = b->used_problems++;
            if (b->problems.size() <= k) {
              b->problems.emplace_back();
              b->problem_raw.emplace_back();
            }
            b->problems[k] = problem;
            b->problem_raw[k].assign(problem.raw);
            b->problem_at.push_back(b->samples.size());
            if (b->used_problems >= kBatchSamples) break;
          }
        }
        std::lock_guard lock(mutex_);
        ready_.push_back(std::move(b));
        ready_cv_.notify_one();
      }
    } catch (...) {
      std::lock_guard lock(mutex_);
      error_ = std::current_exception();
    }
    std::lock_guard lock(mutex_);
    finished_ = true;
    ready_cv_.notify_one();
  }

  FrontEnd front_;
  std::thread thread_;
  std::mutex mutex_;
  std::condition_variable ready_cv_, free_cv_;
  std::deque<std::unique_ptr<Batch>> ready_, free_;
  bool finished_ = false;
  std::exception_ptr error_;
  std::atomic<bool> stop_requested_{false};
  std::unique_ptr<Batch> current_;
  std::size_t next_sample_ = 0, next_problem_ = 0;
};

}  // namespace

std::unique_ptr<SampleFeed> make_sample_feed(RecordReader& reader, const ColumnMap& columns,
                                             bool decimal_comma,
                                             const ValidationOptions& validation,
                                             bool threaded) {
  if (threaded)
    return std::make_unique<ThreadedFeed>(reader, columns, decimal_comma, validation);
  return std::make_unique<InlineFeed>(reader, columns, decimal_comma, validation);
}

}  // namespace baroz
