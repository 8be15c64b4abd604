// Config value types: durations, ratios, CIDR allow rules, listen URLs, HOST:PORT and webhook
// URLs (codedrift/config_values.h). Addresses are invented examples.
#include "codedrift/config_values.h"

#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "ip_bytes.h"

namespace codedrift {
namespace {

using std::chrono::hours;
using std::chrono::milliseconds;
using std::chrono::minutes;
using std::chrono::seconds;

bool Contains(const char* cidr, const char* address) {
  Result<Cidr> rule = Cidr::Parse(cidr);
  EXPECT_TRUE(rule.ok()) << cidr;
  return rule.ok() && rule.value().Contains(Ip(address));
}

// Prefix semantics per RFC 4632 section 3.1; loopback 127.0.0.0/8 per RFC 1122 section
// 3.2.1.3 and ::1 per RFC 4291 section 2.5.3; IPv4-mapped ::ffff:a.b.c.d per RFC 4291
// section 2.5.5.2 (section numbers from memory).
TEST(Cidr, ContainsIpv4EdgeCases) {
  EXPECT_TRUE(Contains("127.0.0.0/8", "127.0.0.1"));
  EXPECT_TRUE(Contains("127.0.0.0/8", "127.255.255.255"));
  EXPECT_FALSE(Contains("127.0.0.0/8", "128.0.0.0"));
  EXPECT_FALSE(Contains("127.0.0.0/8", "126.255.255.255"));
  EXPECT_TRUE(Contains("10.0.0.0/9", "10.127.255.255"));  // prefix inside a byte
  EXPECT_FALSE(Contains("10.0.0.0/9", "10.128.0.0"));
  EXPECT_TRUE(Contains("192.168.1.7/32", "192.168.1.7"));
  EXPECT_FALSE(Contains("192.168.1.7/32", "192.168.1.6"));
  EXPECT_TRUE(Contains("192.168.1.7", "192.168.1.7"));  // bare address: /32
  EXPECT_TRUE(Contains("0.0.0.0/0", "255.255.255.255"));
  EXPECT_FALSE(Contains("0.0.0.0/0", "2001:db8::1"));  // a v6 peer is not a v4 peer
}

TEST(Cidr, ContainsIpv6EdgeCases) {
  EXPECT_TRUE(Contains("::1/128", "::1"));
  EXPECT_FALSE(Contains("::1/128", "::2"));
  EXPECT_TRUE(Contains("fe80::/10", "febf:ffff::1"));
  EXPECT_FALSE(Contains("fe80::/10", "fec0::1"));
  EXPECT_TRUE(Contains("2001:db8::/32", "2001:db8:ffff::"));
  EXPECT_FALSE(Contains("2001:db8::/32", "2001:db9::"));
  EXPECT_TRUE(Contains("::/0", "ffff:ffff:ffff:ffff:ffff:ffff:ffff:ffff"));
}

TEST(Cidr, MappedAddressesMatchAcrossFamilies) {
  EXPECT_TRUE(Contains("127.0.0.0/8", "::ffff:127.0.0.1"));
  EXPECT_FALSE(Contains("127.0.0.0/8", "::ffff:10.0.0.1"));
  EXPECT_FALSE(Contains("127.0.0.0/8", "::127.0.0.1"));  // IPv4-compatible is not mapped
  EXPECT_TRUE(Contains("::ffff:0:0/96", "10.1.2.3"));
  EXPECT_TRUE(Contains("::/0", "10.1.2.3"));
  EXPECT_FALSE(Contains("::1/128", "127.0.0.1"));
}

TEST(Cidr, OtherAddressSizesNeverMatch) {
  const Cidr everything = Cidr::Parse("0.0.0.0/0").value();
  EXPECT_FALSE(everything.Contains(std::vector<uint8_t>{}));
  EXPECT_FALSE(everything.Contains(std::vector<uint8_t>(5, 0)));
  EXPECT_FALSE(Cidr::Parse("::/0").value().Contains(std::vector<uint8_t>(8, 0)));
}

TEST(ConfigValues, DurationsTakeOneWholeNumberAndUnit) {
  EXPECT_EQ(ParseDuration("500ms").value(), milliseconds(500));
  EXPECT_EQ(ParseDuration("5s").value(), seconds(5));
  EXPECT_EQ(ParseDuration("10m").value(), minutes(10));
  EXPECT_EQ(ParseDuration("1h").value(), hours(1));
  EXPECT_EQ(ParseDuration("1d").value(), hours(24));
  EXPECT_EQ(ParseDuration("0s").value(), milliseconds(0));
  EXPECT_EQ(ParseDuration("365d").value(), kMaxConfigDuration);
  for (const char* bad : {"", "5", "s", "1.5s", "-1s", "+1s", "5 s", " 5s", "5S", "5sec", "1w",
                          "1h30m", "366d", "99999999999999999999999s"}) {
    EXPECT_FALSE(ParseDuration(bad).ok()) << bad;
  }
}

TEST(ConfigValues, DurationsPrintInTheLargestExactUnit) {
  EXPECT_EQ(FormatDuration(hours(48)), "2d");
  EXPECT_EQ(FormatDuration(minutes(90)), "90m");
  EXPECT_EQ(FormatDuration(milliseconds(1500)), "1500ms");
  EXPECT_EQ(FormatDuration(milliseconds(0)), "0s");
  for (const char* text : {"7d", "23h", "59m", "61s", "999ms"}) {
    EXPECT_EQ(FormatDuration(ParseDuration(text).value()), text);
  }
}

TEST(ConfigValues, RatiosArePercentagesOrFractions) {
  EXPECT_DOUBLE_EQ(ParseRatio("5%").value(), 0.05);
  EXPECT_DOUBLE_EQ(ParseRatio("2.5%").value(), 0.025);
  EXPECT_DOUBLE_EQ(ParseRatio("0.05").value(), 0.05);
  EXPECT_DOUBLE_EQ(ParseRatio("100%").value(), 1.0);
  EXPECT_DOUBLE_EQ(ParseRatio("0").value(), 0.0);
  for (const char* bad :
       {"", "%", "5", "101%", "-5%", "1e-2", "nan", "inf", ".5", "5.", "5 %", "0x1"}) {
    EXPECT_FALSE(ParseRatio(bad).ok()) << bad;
  }
}

TEST(ConfigValues, ListenUrlsRoundTrip) {
  for (const char* url : {"tcp://127.0.0.1:7071", "udp://[::1]:7072", "tcp://localhost:0",
                          "unix:///run/codedrift/up.sock", "udp://[fe80::1]:9"}) {
    Result<ListenAddress> address = ListenAddress::Parse(url);
    ASSERT_TRUE(address.ok()) << address.error().message;
    EXPECT_EQ(address.value().ToString(), url);
  }
  const ListenAddress v6 = ListenAddress::Parse("udp://[::1]:7072").value();
  EXPECT_EQ(v6.scheme, ListenScheme::kUdp);
  EXPECT_EQ(v6.host, "::1");
  EXPECT_EQ(v6.port, 7072);
  EXPECT_FALSE(ListenAddress::Parse("tcp://[::1:7072").ok());
  EXPECT_FALSE(ListenAddress::Parse("tcp://[::1]7072").ok());
  EXPECT_FALSE(ListenAddress::Parse("tcp://:7072").ok());
  EXPECT_FALSE(ListenAddress::Parse("tcp://host:").ok());
  EXPECT_FALSE(ListenAddress::Parse("unix:///" + std::string(107, 'x')).ok());
}

TEST(ConfigValues, HostPortAndWebhookUrls) {
  EXPECT_EQ(HostPort::Parse("[::1]:7070").value(), (HostPort{"::1", 7070}));
  EXPECT_EQ(HostPort::Parse("[::1]:7070").value().ToString(), "[::1]:7070");
  EXPECT_FALSE(HostPort::Parse("[::1]").ok());
  const HttpUrl plain = HttpUrl::Parse("http://alerts.example").value();
  EXPECT_EQ(plain.host, "alerts.example");
  EXPECT_EQ(plain.port, 80);
  EXPECT_EQ(plain.target, "/");
  const HttpUrl query = HttpUrl::Parse("http://[::1]:9000?key=v").value();
  EXPECT_EQ(query.host, "::1");
  EXPECT_EQ(query.port, 9000);
  EXPECT_EQ(query.target, "/?key=v");
  EXPECT_FALSE(HttpUrl::Parse("http://user@host/").ok());
  EXPECT_FALSE(HttpUrl::Parse("http://host/a b").ok());
  EXPECT_FALSE(HttpUrl::Parse("ftp://host/").ok());
}

}  // namespace
}  // namespace codedrift
