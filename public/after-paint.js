// Starts the viewer's code once a page the server rendered has been painted: server/plan-page.ts
// puts this script in place of the entry script's tag, so that the page shows from its HTML and
// style sheet alone and the code's download, decoding, compiling and evaluation come after its
// first layout instead of beside or before it. The page then hydrates (src/main.tsx).
;(function () {
  var script = document.currentScript
  var entry = script && script.getAttribute('data-entry')
  if (!entry) return
  requestAnimationFrame(function () {
    setTimeout(function () {
      import(entry)
    }, 0)
  })
})()
