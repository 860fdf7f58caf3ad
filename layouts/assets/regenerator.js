/* The one piece of Babel's old browser polyfill that Dash's bundles still call: the
   `regeneratorRuntime` global behind their lazy-component loader (an async function compiled
   to a state machine: `regeneratorRuntime.mark(f)`, `regeneratorRuntime.wrap(inner, f)`).
   server.app leaves that polyfill (@babel/polyfill 7.12, core-js 2) out of the page: a browser
   that runs plotly.js 3 has everything else it adds, and it cost every draw about 0.06 s to
   run plus its slower replacements of native methods such as String.prototype.trim.

   This covers what those state machines use: `prev`, `next`, `sent`, `stop()` and
   `abrupt("return", value)`, and no try/catch blocks (no try locations), which is all the
   Babel output in Dash's bundles holds (checked for every bundle the page loads by
   tests/server/test_page_scripts.py). A state machine with try locations is refused loudly.
   The protocol is that of regenerator-runtime (the generator object's next/throw/return, as
   ECMAScript's generators, ECMA-262 §27.5). */
(function () {
  "use strict";
  if (window.regeneratorRuntime) { return; }
  var CONTINUE = {};  // what `abrupt` answers: run the machine again from `next`

  function wrap(inner, outer, self, tryLocations) {
    if (tryLocations && tryLocations.length) {
      throw new Error("regenerator.js: a compiled async function with try/catch blocks is not supported");
    }
    var context = {
      prev: 0, next: 0, sent: undefined, rval: undefined, done: false,
      stop: function () { this.done = true; return this.rval; },
      abrupt: function (type, value) {
        if (type !== "return") { throw new Error("regenerator.js: abrupt(" + type + ") is not supported"); }
        this.rval = value;
        this.next = "end";
        return CONTINUE;
      }
    };
    function resume(method, value) {
      if (context.done || method !== "next") {
        // finished, or stopped from outside: with no try locations nothing can catch or finish
        context.done = true;
        if (method === "throw") { throw value; }
        return {value: method === "return" ? value : undefined, done: true};
      }
      context.sent = value;
      for (;;) {
        var out;
        try { out = inner.call(self, context); } catch (err) { context.done = true; throw err; }
        if (out !== CONTINUE) { return {value: out, done: context.done}; }
      }
    }
    var generator = {
      next: function (value) { return resume("next", value); },
      "throw": function (value) { return resume("throw", value); },
      "return": function (value) { return resume("return", value); }
    };
    generator[Symbol.iterator] = function () { return this; };
    return generator;
  }

  window.regeneratorRuntime = {mark: function (generatorFunction) { return generatorFunction; }, wrap: wrap};
})();
