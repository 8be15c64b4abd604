// A small reader for the HTML Chromium serializes (--dump-dom): start tags with their
// attributes and the text that directly follows each tag. Enough to find elements by data-*
// attributes; not a general HTML parser. Header-only (see child_process.h); pure functions.
#pragma once

#include <cctype>
#include <cstdint>
#include <map>
#include <string>
#include <string_view>
#include <vector>

namespace codedrift::testing {

struct HtmlElement {
  std::string tag;
  std::map<std::string, std::string> attrs;
  std::string text;  // decoded text up to the next tag

  bool Has(const std::string& name) const { return attrs.count(name) > 0; }
  std::string Attr(const std::string& name) const {
    auto it = attrs.find(name);
    return it == attrs.end() ? std::string() : it->second;
  }
};

inline void AppendUtf8(std::string& out, uint32_t cp) {
  if (cp < 0x80) {
    out += static_cast<char>(cp);
  } else if (cp < 0x800) {
    out += static_cast<char>(0xc0 | (cp >> 6));
    out += static_cast<char>(0x80 | (cp & 0x3f));
  } else if (cp < 0x10000) {
    out += static_cast<char>(0xe0 | (cp >> 12));
    out += static_cast<char>(0x80 | ((cp >> 6) & 0x3f));
    out += static_cast<char>(0x80 | (cp & 0x3f));
  } else {
    out += static_cast<char>(0xf0 | (cp >> 18));
    out += static_cast<char>(0x80 | ((cp >> 12) & 0x3f));
    out += static_cast<char>(0x80 | ((cp >> 6) & 0x3f));
    out += static_cast<char>(0x80 | (cp & 0x3f));
  }
}

// The entities an HTML serializer writes (HTML spec, "Serializing HTML fragments": &amp;
// &nbsp; &lt; &gt; &quot;) plus numeric references.
inline std::string DecodeEntities(std::string_view in) {
  std::string out;
  for (size_t i = 0; i < in.size(); ++i) {
    if (in[i] != '&') {
      out += in[i];
      continue;
    }
    const size_t end = in.find(';', i);
    if (end == std::string_view::npos || end - i > 10) {
      out += in[i];
      continue;
    }
    const std::string_view name = in.substr(i + 1, end - i - 1);
    if (name == "amp")
      out += '&';
    else if (name == "lt")
      out += '<';
    else if (name == "gt")
      out += '>';
    else if (name == "quot")
      out += '"';
    else if (name == "apos")
      out += '\'';
    else if (name == "nbsp")
      AppendUtf8(out, 0xa0);
    else if (name.size() > 1 && name[0] == '#') {
      const bool hex = name[1] == 'x' || name[1] == 'X';
      AppendUtf8(out, static_cast<uint32_t>(std::stoul(std::string(name.substr(hex ? 2 : 1)),
                                                       nullptr, hex ? 16 : 10)));
    } else {
      out += in.substr(i, end - i + 1);
    }
    i = end;
  }
  return out;
}

inline std::vector<HtmlElement> ScanElements(const std::string& html) {
  std::vector<HtmlElement> elements;
  size_t at = 0;
  while ((at = html.find('<', at)) != std::string::npos) {
    if (at + 1 >= html.size() || !std::isalpha(static_cast<unsigned char>(html[at + 1]))) {
      ++at;
      continue;
    }
    HtmlElement element;
    size_t i = at + 1;
    while (i < html.size() && !std::isspace(static_cast<unsigned char>(html[i])) &&
           html[i] != '>' && html[i] != '/') {
      element.tag += static_cast<char>(std::tolower(static_cast<unsigned char>(html[i++])));
    }
    while (i < html.size() && html[i] != '>') {
      if (std::isspace(static_cast<unsigned char>(html[i])) || html[i] == '/') {
        ++i;
        continue;
      }
      std::string name;
      while (i < html.size() && html[i] != '=' && html[i] != '>' &&
             !std::isspace(static_cast<unsigned char>(html[i]))) {
        name += html[i++];
      }
      std::string value;
      if (i < html.size() && html[i] == '=') {
        ++i;
        const char quote = html[i];
        if (quote == '"' || quote == '\'') {
          const size_t close = html.find(quote, i + 1);
          if (close == std::string::npos) return elements;  // cut off: nothing more to read
          value = html.substr(i + 1, close - i - 1);
          i = close + 1;
        } else {
          while (i < html.size() && html[i] != '>' &&
                 !std::isspace(static_cast<unsigned char>(html[i]))) {
            value += html[i++];
          }
        }
      }
      element.attrs[name] = DecodeEntities(value);
    }
    if (i >= html.size()) break;
    const size_t text_end = html.find('<', i);
    element.text = DecodeEntities(std::string_view(html).substr(i + 1, text_end - i - 1));
    elements.push_back(std::move(element));
    at = i;
  }
  return elements;
}

}  // namespace codedrift::testing
