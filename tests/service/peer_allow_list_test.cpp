// The receiver's allow-list: AE, AE@HOST and AE@ADDRESS/BITS entries, matched against peer addresses.

#include <countersign/service/peer_allow_list.hpp>

#include <gtest/gtest.h>

namespace countersign::service {
namespace {

IpAddress ip(const char* text) { return IpAddress::parse(text).value(); }

TEST(PeerAllowList, PlainEntriesAllowTheirAeTitleFromAnyHost) {
  const auto list = PeerAllowList::parse({"FERN-TPS", "  FERN-QA  "});
  ASSERT_TRUE(list) << list.error().message();
  EXPECT_TRUE(list->allows("FERN-TPS", ip("192.0.2.7")));
  EXPECT_TRUE(list->allows("FERN-QA", ip("2001:db8::1")));
  EXPECT_FALSE(list->allows("INTRUDER", ip("127.0.0.1")));
  EXPECT_TRUE(list->host_may_connect(ip("198.51.100.1")));
  EXPECT_EQ(list->refusal_reason("INTRUDER", ip("127.0.0.1")),
            "calling AE title not on the allow-list (--allow-ae)");
}

TEST(PeerAllowList, HostAndNetworkEntriesBindTheAeTitleToAddresses) {
  const auto list =
      PeerAllowList::parse({"FERN-TPS@192.0.2.10", "FERN-QA@198.51.100.0/24", "FERN-V6@2001:db8::/32"});
  ASSERT_TRUE(list) << list.error().message();
  EXPECT_TRUE(list->allows("FERN-TPS", ip("192.0.2.10")));
  EXPECT_FALSE(list->allows("FERN-TPS", ip("192.0.2.11")));
  EXPECT_TRUE(list->allows("FERN-QA", ip("198.51.100.254")));
  EXPECT_FALSE(list->allows("FERN-QA", ip("198.51.101.1")));
  EXPECT_TRUE(list->allows("FERN-V6", ip("2001:db8:1234::5")));
  EXPECT_FALSE(list->allows("FERN-V6", ip("2001:db9::5")));
  // An IPv4 peer seen through an IPv6 socket is the same peer.
  EXPECT_TRUE(list->allows("FERN-TPS", ip("::ffff:192.0.2.10")));
  EXPECT_FALSE(list->host_may_connect(ip("203.0.113.9")));
  EXPECT_EQ(list->refusal_reason("FERN-TPS", ip("127.0.0.1")),
            "calling AE title allowed only from 192.0.2.10, not from 127.0.0.1 (--allow-ae)");
}

TEST(PeerAllowList, HostNamesAreResolvedAndTheLastAtSignSeparatesTheHost) {
  const auto list = PeerAllowList::parse({"FERN@TPS@localhost"});
  ASSERT_TRUE(list) << list.error().message();
  ASSERT_EQ(list->entries().size(), 1U);
  EXPECT_EQ(list->entries()[0].ae_title, "FERN@TPS");
  EXPECT_TRUE(list->allows("FERN@TPS", ip("127.0.0.1")));
}

TEST(PeerAllowList, BadEntriesAreUsageErrorsNamingTheEntry) {
  for (const char* bad : {"", "A-TITLE-THAT-IS-TOO-LONG", "FERN@", "FERN@10.0.0.0/33", "FERN@10.0.0.0/x",
                          "FERN@no-such-host.invalid", "BACK\\SLASH"}) {
    const auto list = PeerAllowList::parse({bad});
    ASSERT_FALSE(list) << bad;
    EXPECT_EQ(list.error().kind, ErrorKind::usage);
    EXPECT_EQ(list.error().attribute, "--allow-ae");
  }
  EXPECT_FALSE(PeerAllowList::parse({}));
}

}  // namespace
}  // namespace countersign::service
