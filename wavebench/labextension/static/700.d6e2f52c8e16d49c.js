"use strict";(self.rspackChunk_wavebench_labextension=self.rspackChunk_wavebench_labextension||[]).push([[700],{646(e,r,o){var t=o(601),n=o.n(t),a=o(314),i=(o.n(a))()(n());i.push([e.id,`/* wavebench JupyterLab extension: the Campaigns side panel. */

.wb-Campaigns {
  display: flex;
  flex-direction: column;
  background: var(--jp-layout-color1);
  color: var(--jp-ui-font-color1);
  font-size: var(--jp-ui-font-size1);
  overflow-y: auto;
  min-width: 220px;
}

.wb-Campaigns-header {
  display: flex;
  align-items: center;
  justify-content: space-between;
  padding: 8px 12px 4px;
  border-bottom: var(--jp-border-width) solid var(--jp-border-color2);
}

.wb-Campaigns-title {
  margin: 0;
  font-size: var(--jp-ui-font-size2);
  font-weight: 600;
  letter-spacing: 0.02em;
}

.wb-Campaigns-refresh {
  padding: 2px 10px;
  border: var(--jp-border-width) solid var(--jp-border-color1);
  border-radius: 3px;
  background: var(--jp-layout-color2);
  color: var(--jp-ui-font-color1);
  cursor: pointer;
}

.wb-Campaigns-status {
  padding: 6px 12px;
  color: var(--jp-ui-font-color2);
}

.wb-Campaigns-status.wb-mod-error {
  color: var(--jp-error-color1);
}

.wb-Campaigns-list {
  list-style: none;
  margin: 0;
  padding: 0 8px 8px;
}

.wb-Store {
  margin: 6px 0;
  padding: 6px 8px;
  border: var(--jp-border-width) solid var(--jp-border-color2);
  border-left: 4px solid #2b7a8c;
  border-radius: 3px;
  cursor: pointer;
}

.wb-Store:hover {
  background: var(--jp-layout-color2);
}

.wb-Store.wb-mod-running {
  border-left-color: #d9982b;
}

.wb-Store.wb-mod-interrupted {
  border-left-color: #8c8c8c;
}

.wb-Store-top {
  display: flex;
  justify-content: space-between;
  gap: 6px;
}

.wb-Store-scenario {
  font-weight: 600;
}

.wb-Store-state {
  font-size: var(--jp-ui-font-size0);
  text-transform: uppercase;
  color: var(--jp-ui-font-color2);
}

.wb-Store-path {
  font-family: var(--jp-code-font-family);
  font-size: var(--jp-ui-font-size0);
  color: var(--jp-ui-font-color2);
  overflow: hidden;
  text-overflow: ellipsis;
  white-space: nowrap;
}

.wb-Store-progress {
  display: flex;
  align-items: center;
  gap: 6px;
  margin: 4px 0;
}

.wb-Store-bar {
  flex: 1;
  height: 5px;
  background: var(--jp-layout-color3);
  border-radius: 3px;
  overflow: hidden;
}

.wb-Store-fill {
  height: 100%;
  background: #2b7a8c;
}

.wb-Store-count {
  font-size: var(--jp-ui-font-size0);
  color: var(--jp-ui-font-color2);
  white-space: nowrap;
}

.wb-Store-verdicts {
  display: flex;
  flex-wrap: wrap;
  gap: 4px;
}

.wb-Verdict {
  padding: 0 6px;
  border-radius: 8px;
  font-size: var(--jp-ui-font-size0);
  border: 1px solid currentColor;
}

.wb-Verdict.wb-mod-pass {
  color: #2e7d4f;
}

.wb-Verdict.wb-mod-fail {
  color: #b03a2e;
}

.wb-Verdict.wb-mod-undecided {
  color: #9a6f12;
}

.wb-Store-error {
  color: var(--jp-error-color1);
  font-size: var(--jp-ui-font-size0);
}

.wb-Store-note:not(:empty) {
  margin-top: 3px;
  font-style: italic;
  color: var(--jp-ui-font-color2);
}

.wb-Store.wb-mod-unknown {
  border-left-color: var(--jp-border-color1);
}
`,""]),o.d(r,{},{A:i})},314(e){e.exports=function(e){var r=[];return r.toString=function(){return this.map(function(r){var o="",t=void 0!==r[5];return r[4]&&(o+="@supports (".concat(r[4],") {")),r[2]&&(o+="@media ".concat(r[2]," {")),t&&(o+="@layer".concat(r[5].length>0?" ".concat(r[5]):""," {")),o+=e(r),t&&(o+="}"),r[2]&&(o+="}"),r[4]&&(o+="}"),o}).join("")},r.i=function(e,o,t,n,a){"string"==typeof e&&(e=[[null,e,void 0]]);var i={};if(t)for(var c=0;c<this.length;c++){var s=this[c][0];null!=s&&(i[s]=!0)}for(var p=0;p<e.length;p++){var l=[].concat(e[p]);t&&i[l[0]]||(void 0!==a&&(void 0===l[5]||(l[1]="@layer".concat(l[5].length>0?" ".concat(l[5]):""," {").concat(l[1],"}")),l[5]=a),o&&(l[2]&&(l[1]="@media ".concat(l[2]," {").concat(l[1],"}")),l[2]=o),n&&(l[4]?(l[1]="@supports (".concat(l[4],") {").concat(l[1],"}"),l[4]=n):l[4]="".concat(n)),r.push(l))}},r}},601(e){e.exports=function(e){return e[1]}},72(e){var r=[];function o(e){for(var o=-1,t=0;t<r.length;t++)if(r[t].identifier===e){o=t;break}return o}function t(e,t){for(var n={},a=[],i=0;i<e.length;i++){var c=e[i],s=t.base?c[0]+t.base:c[0],p=n[s]||0,l="".concat(s," ").concat(p);n[s]=p+1;var d=o(l),u={css:c[1],media:c[2],sourceMap:c[3],supports:c[4],layer:c[5]};if(-1!==d)r[d].references++,r[d].updater(u);else{var f=function(e,r){var o=r.domAPI(r);return o.update(e),function(r){r?(r.css!==e.css||r.media!==e.media||r.sourceMap!==e.sourceMap||r.supports!==e.supports||r.layer!==e.layer)&&o.update(e=r):o.remove()}}(u,t);t.byIndex=i,r.splice(i,0,{identifier:l,updater:f,references:1})}a.push(l)}return a}e.exports=function(e,n){var a=t(e=e||[],n=n||{});return function(e){e=e||[];for(var i=0;i<a.length;i++){var c=o(a[i]);r[c].references--}for(var s=t(e,n),p=0;p<a.length;p++){var l=o(a[p]);0===r[l].references&&(r[l].updater(),r.splice(l,1))}a=s}}},659(e){var r={};e.exports=function(e,o){var t=function(e){if(void 0===r[e]){var o=document.querySelector(e);if(window.HTMLIFrameElement&&o instanceof window.HTMLIFrameElement)try{o=o.contentDocument.head}catch(e){o=null}r[e]=o}return r[e]}(e);if(!t)throw Error("Couldn't find a style target. This probably means that the value for the 'insert' parameter is invalid.");t.appendChild(o)}},540(e){e.exports=function(e){var r=document.createElement("style");return e.setAttributes(r,e.attributes),e.insert(r,e.options),r}},56(e,r,o){e.exports=function(e){var r=o.nc;r&&e.setAttribute("nonce",r)}},825(e){e.exports=function(e){if("u"<typeof document)return{update:function(){},remove:function(){}};var r=e.insertStyleElement(e);return{update:function(o){var t,n,a;t="",o.supports&&(t+="@supports (".concat(o.supports,") {")),o.media&&(t+="@media ".concat(o.media," {")),(n=void 0!==o.layer)&&(t+="@layer".concat(o.layer.length>0?" ".concat(o.layer):""," {")),t+=o.css,n&&(t+="}"),o.media&&(t+="}"),o.supports&&(t+="}"),(a=o.sourceMap)&&"u">typeof btoa&&(t+="\n/*# sourceMappingURL=data:application/json;base64,".concat(btoa(unescape(encodeURIComponent(JSON.stringify(a))))," */")),e.styleTagTransform(t,r,e.options)},remove:function(){var e;null===(e=r).parentNode||e.parentNode.removeChild(e)}}}},113(e){e.exports=function(e,r){if(r.styleSheet)r.styleSheet.cssText=e;else{for(;r.firstChild;)r.removeChild(r.firstChild);r.appendChild(document.createTextNode(e))}}},959(e,r,o){var t=o(72),n=o.n(t),a=o(825),i=o.n(a),c=o(659),s=o.n(c),p=o(56),l=o.n(p),d=o(540),u=o.n(d),f=o(113),b=o.n(f),v=o(646),m={};m.styleTagTransform=b(),m.setAttributes=l(),m.insert=s().bind(null,"head"),m.domAPI=i(),m.insertStyleElement=u(),n()(v.A,m),v.A&&v.A.locals&&v.A.locals}}]);