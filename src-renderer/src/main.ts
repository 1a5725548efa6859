import { createApp } from 'vue';
import { createPinia } from 'pinia';
import App from './App.vue';
import { connectBridge } from './bridge/index.js';
import './styles.css';

connectBridge();
createApp(App).use(createPinia()).mount('#app');
