// Starts the browser app: fonts, theme, Pinia, router.
import '@fontsource/fira-sans/400.css'
import '@fontsource/fira-sans/500.css'
import '@fontsource/fira-sans/600.css'
import '@fontsource/fira-sans/700.css'
import './styles/theme.css'
import './styles/app.css'
// First, before any module that builds or parses a schema at import time.
import './zod-config'
import { createApp } from 'vue'
import { createPinia } from 'pinia'
import App from './App.vue'
import { createAppRouter } from './router'

createApp(App).use(createPinia()).use(createAppRouter()).mount('#app')
