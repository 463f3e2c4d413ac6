// The cluster tests' main: libnats is started before the tests and shut down after them, so
// its threads are gone and its memory freed when the leak checker looks.
#include <gtest/gtest.h>

#include "daemon/cluster/nats_library.h"

int main(int argc, char** argv) {
  testing::InitGoogleTest(&argc, argv);
  const yoke::cluster::NatsLibrary library;
  return RUN_ALL_TESTS();
}
