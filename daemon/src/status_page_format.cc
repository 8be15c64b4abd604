#include "status_page_parts.h"

namespace codedrift::status_page {

// Formatting says what a number is: every figure carries its unit, nulls read as a dash with
// the reason in a tooltip, negative numbers get a real minus sign. Helpers build DOM nodes
// with textContent only, so names, reasons and symbols from the API are never parsed as HTML.
std::string_view ScriptFormat() {
  return R"js(
'use strict';
const SVG_NS = 'http://www.w3.org/2000/svg';
const MINUS = '\u2212';
const THIN = '\u2009';

function setAttrs(node, attrs) {
  for (const [name, value] of Object.entries(attrs || {})) {
    if (value === undefined || value === null || value === false) continue;
    node.setAttribute(name, String(value));
  }
}
function append(node, children) {
  for (const child of children.flat(Infinity)) {
    if (child === undefined || child === null || child === false) continue;
    node.append(child instanceof Node ? child : document.createTextNode(String(child)));
  }
  return node;
}
function el(tag, attrs, ...children) {
  const node = document.createElement(tag);
  setAttrs(node, attrs);
  return append(node, children);
}
function svg(tag, attrs, ...children) {
  const node = document.createElementNS(SVG_NS, tag);
  setAttrs(node, attrs);
  return append(node, children);
}

const isNum = (v) => typeof v === 'number' && Number.isFinite(v);
const rawValue = (v) => (v === undefined || v === null ? '' : String(v));
const signed = (text) => (text.startsWith('-') ? MINUS + text.slice(1) : text);
// A value that rounds to zero is shown as zero, never as "-0.0".
const fixed = (v, digits) => {
  const text = v.toFixed(digits);
  return /^-0(\.0*)?$/.test(text) ? text.slice(1) : signed(text);
};

function grouped(n) {
  const digits = String(Math.round(Math.abs(n)));
  let out = '';
  for (let i = 0; i < digits.length; ++i) {
    if (i > 0 && (digits.length - i) % 3 === 0) out += THIN;
    out += digits[i];
  }
  return (n < 0 ? MINUS : '') + out;
}

// Each formatter returns {text, unit}.
const fmt = {
  bits: (v) => ({text: fixed(v, 3), unit: 'bits/symbol'}),
  percent: (ratio) => ({text: fixed(ratio * 100, 1), unit: '%'}),
  seconds(s) {
    if (s < 1) return {text: s.toPrecision(2), unit: 's'};
    if (s < 120) return {text: s.toFixed(1), unit: 's'};
    const human = s < 7200 ? (s / 60).toFixed(1) + ' min'
                : s < 172800 ? (s / 3600).toFixed(1) + ' h' : (s / 86400).toFixed(1) + ' d';
    return {text: grouped(s), unit: 's (' + human + ')'};
  },
  rate: (noun) => (v) => ({text: v < 10 ? v.toFixed(1) : grouped(v), unit: noun + '/s'}),
  count: (noun) => (v) => ({text: grouped(v), unit: noun}),
};

function probabilityText(p) {
  const percent = p * 100;
  if (percent === 0) return '0 %';
  if (percent >= 10) return percent.toFixed(1) + ' %';
  if (percent >= 1) return percent.toFixed(2) + ' %';
  return percent.toPrecision(2) + ' %';
}

const pad2 = (n) => String(n).padStart(2, '0');
function clock(unixSeconds, withSeconds = true) {
  const d = new Date(unixSeconds * 1000);
  const hm = pad2(d.getHours()) + ':' + pad2(d.getMinutes());
  return withSeconds ? hm + ':' + pad2(d.getSeconds()) : hm;
}
function dayAndClock(unixSeconds) {
  const d = new Date(unixSeconds * 1000);
  return (d.getMonth() + 1) + '-' + pad2(d.getDate()) + ' ' + clock(unixSeconds, false);
}
function ago(seconds) {
  if (seconds < 90) return Math.max(0, Math.round(seconds)) + ' s';
  if (seconds < 5400) return Math.round(seconds / 60) + ' min';
  if (seconds < 172800) return (seconds / 3600).toFixed(1) + ' h';
  return (seconds / 86400).toFixed(1) + ' d';
}

// Bytes symbols arrive as 0xNN (or 0xNNNN... for blocks): show the characters too.
function symbolLabel(symbol, alphabet) {
  if (!String(alphabet).startsWith('bytes') || !/^0x([0-9a-f]{2})+$/i.test(symbol)) {
    return symbol.length > 14 ? symbol.slice(0, 13) + '\u2026' : symbol;
  }
  const names = {0x20: 'space', 0x09: '\\t', 0x0a: '\\n', 0x0d: '\\r', 0x00: 'NUL'};
  const bytes = symbol.slice(2).match(/../g).map((h) => parseInt(h, 16));
  if (bytes.length === 1 && names[bytes[0]] !== undefined) return symbol + ' ' + names[bytes[0]];
  if (bytes.every((b) => b > 0x20 && b < 0x7f)) {
    return symbol + ' \u2018' + String.fromCharCode(...bytes) + '\u2019';
  }
  return symbol;
}

const modelKey = (doc) => doc.stream + '/' + doc.model;
)js";
}

}  // namespace codedrift::status_page
