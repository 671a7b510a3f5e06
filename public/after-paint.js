// Starts the viewer's code once a page the server rendered has been painted: server/plan-page.ts
// puts this script in place of the entry script's tag, so that the page shows from its HTML and
// style sheet alone and the code's download, decoding, compiling and evaluation come after its
// first layout instead of beside or before it. The API answer the page hydrates from (data-fetch)
// is asked for at the same moment, as a preload that the page's own fetch takes. The page then
// hydrates (src/main.tsx).
;(function () {
  var script = document.currentScript
  var entry = script && script.getAttribute('data-entry')
  var fetchPath = script && script.getAttribute('data-fetch')
  if (!entry) return
  requestAnimationFrame(function () {
    setTimeout(function () {
      if (fetchPath) {
        var link = document.createElement('link')
        link.rel = 'preload'
        link.as = 'fetch'
        link.crossOrigin = 'anonymous'
        link.href = fetchPath
        document.head.appendChild(link)
      }
      import(entry)
    }, 0)
  })
})()
