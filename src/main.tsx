import { StrictMode } from 'react'
import { createRoot } from 'react-dom/client'
import './styles.css'

// Placeholder shell until the viewer lands: it only says what this page will be.
function App() {
  return (
    <main className="p-6 font-sans">
      <h1 className="text-2xl font-semibold">Pitside viewer</h1>
      <p>Sign-in and plans are served by <code>pitside serve</code>.</p>
    </main>
  )
}

createRoot(document.getElementById('root')!).render(
  <StrictMode>
    <App />
  </StrictMode>,
)
