#include "status_page.h"

namespace codedrift {

// A minimal page until the full status page lands: it lists the models from the JSON API.
std::string_view StatusPageHtml() {
  return R"html(<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>codedrift</title>
<meta name="viewport" content="width=device-width, initial-scale=1"></head>
<body><h1>codedrift</h1><ul id="models"></ul>
<script>
fetch('/api/v1/models').then(r => r.json()).then(doc => {
  const list = document.getElementById('models');
  for (const m of doc.models) {
    const item = document.createElement('li');
    item.textContent = m.stream + '/' + m.model + ': ' + m.state + ' - ' + m.reason;
    list.appendChild(item);
  }
});
</script></body></html>
)html";
}

}  // namespace codedrift
