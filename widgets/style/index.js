import './index.css';
