"use strict";(self.rspackChunk_wavebench_labextension=self.rspackChunk_wavebench_labextension||[]).push([[700],{646(r,e,o){var t=o(601),a=o.n(t),n=o(314),i=(o.n(n))()(a());i.push([r.id,`/* wavebench JupyterLab extension: the Campaigns side panel. */

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

/* The wavebench spec summary view. */

.wb-SpecSummary {
  padding: 12px 20px;
  overflow: auto;
  background: var(--jp-layout-color0);
  color: var(--jp-ui-font-color1);
  font-size: var(--jp-ui-font-size1);
}

.wb-SpecSummary-head {
  display: flex;
  align-items: center;
  gap: 16px;
}

.wb-SpecSummary-head h2 {
  margin: 0;
  font-size: var(--jp-ui-font-size3);
}

.wb-SpecSummary-open {
  padding: 3px 12px;
  border: var(--jp-border-width) solid #2b7a8c;
  border-radius: 3px;
  background: var(--jp-layout-color1);
  color: var(--jp-ui-font-color1);
  cursor: pointer;
}

.wb-SpecSummary-open:disabled {
  opacity: 0.5;
  cursor: default;
}

.wb-SpecSummary-table {
  margin-top: 10px;
  border-collapse: collapse;
}

.wb-SpecSummary-table td {
  padding: 2px 12px 2px 0;
  border-bottom: var(--jp-border-width) solid var(--jp-border-color3);
  vertical-align: top;
}

.wb-SpecSummary-section {
  color: var(--jp-ui-font-color2);
}

.wb-SpecSummary-field,
.wb-SpecSummary-value {
  font-family: var(--jp-code-font-family);
  font-size: var(--jp-code-font-size);
}

.wb-SpecSummary h3 {
  margin: 14px 0 4px;
  font-size: var(--jp-ui-font-size2);
}

.wb-SpecSummary-reqs {
  margin: 0;
  padding-left: 18px;
  font-family: var(--jp-code-font-family);
}

.wb-SpecSummary-note {
  margin-top: 12px;
  color: var(--jp-ui-font-color2);
  font-style: italic;
}

.wb-Store-report {
  font-size: var(--jp-ui-font-size0);
  color: #2b7a8c;
  font-weight: 600;
  white-space: nowrap;
}
`,""]),o.d(e,{},{A:i})},314(r){r.exports=function(r){var e=[];return e.toString=function(){return this.map(function(e){var o="",t=void 0!==e[5];return e[4]&&(o+="@supports (".concat(e[4],") {")),e[2]&&(o+="@media ".concat(e[2]," {")),t&&(o+="@layer".concat(e[5].length>0?" ".concat(e[5]):""," {")),o+=r(e),t&&(o+="}"),e[2]&&(o+="}"),e[4]&&(o+="}"),o}).join("")},e.i=function(r,o,t,a,n){"string"==typeof r&&(r=[[null,r,void 0]]);var i={};if(t)for(var p=0;p<this.length;p++){var c=this[p][0];null!=c&&(i[c]=!0)}for(var s=0;s<r.length;s++){var l=[].concat(r[s]);t&&i[l[0]]||(void 0!==n&&(void 0===l[5]||(l[1]="@layer".concat(l[5].length>0?" ".concat(l[5]):""," {").concat(l[1],"}")),l[5]=n),o&&(l[2]&&(l[1]="@media ".concat(l[2]," {").concat(l[1],"}")),l[2]=o),a&&(l[4]?(l[1]="@supports (".concat(l[4],") {").concat(l[1],"}"),l[4]=a):l[4]="".concat(a)),e.push(l))}},e}},601(r){r.exports=function(r){return r[1]}},72(r){var e=[];function o(r){for(var o=-1,t=0;t<e.length;t++)if(e[t].identifier===r){o=t;break}return o}function t(r,t){for(var a={},n=[],i=0;i<r.length;i++){var p=r[i],c=t.base?p[0]+t.base:p[0],s=a[c]||0,l="".concat(c," ").concat(s);a[c]=s+1;var d=o(l),u={css:p[1],media:p[2],sourceMap:p[3],supports:p[4],layer:p[5]};if(-1!==d)e[d].references++,e[d].updater(u);else{var f=function(r,e){var o=e.domAPI(e);return o.update(r),function(e){e?(e.css!==r.css||e.media!==r.media||e.sourceMap!==r.sourceMap||e.supports!==r.supports||e.layer!==r.layer)&&o.update(r=e):o.remove()}}(u,t);t.byIndex=i,e.splice(i,0,{identifier:l,updater:f,references:1})}n.push(l)}return n}r.exports=function(r,a){var n=t(r=r||[],a=a||{});return function(r){r=r||[];for(var i=0;i<n.length;i++){var p=o(n[i]);e[p].references--}for(var c=t(r,a),s=0;s<n.length;s++){var l=o(n[s]);0===e[l].references&&(e[l].updater(),e.splice(l,1))}n=c}}},659(r){var e={};r.exports=function(r,o){var t=function(r){if(void 0===e[r]){var o=document.querySelector(r);if(window.HTMLIFrameElement&&o instanceof window.HTMLIFrameElement)try{o=o.contentDocument.head}catch(r){o=null}e[r]=o}return e[r]}(r);if(!t)throw Error("Couldn't find a style target. This probably means that the value for the 'insert' parameter is invalid.");t.appendChild(o)}},540(r){r.exports=function(r){var e=document.createElement("style");return r.setAttributes(e,r.attributes),r.insert(e,r.options),e}},56(r,e,o){r.exports=function(r){var e=o.nc;e&&r.setAttribute("nonce",e)}},825(r){r.exports=function(r){if("u"<typeof document)return{update:function(){},remove:function(){}};var e=r.insertStyleElement(r);return{update:function(o){var t,a,n;t="",o.supports&&(t+="@supports (".concat(o.supports,") {")),o.media&&(t+="@media ".concat(o.media," {")),(a=void 0!==o.layer)&&(t+="@layer".concat(o.layer.length>0?" ".concat(o.layer):""," {")),t+=o.css,a&&(t+="}"),o.media&&(t+="}"),o.supports&&(t+="}"),(n=o.sourceMap)&&"u">typeof btoa&&(t+="\n/*# sourceMappingURL=data:application/json;base64,".concat(btoa(unescape(encodeURIComponent(JSON.stringify(n))))," */")),r.styleTagTransform(t,e,r.options)},remove:function(){var r;null===(r=e).parentNode||r.parentNode.removeChild(r)}}}},113(r){r.exports=function(r,e){if(e.styleSheet)e.styleSheet.cssText=r;else{for(;e.firstChild;)e.removeChild(e.firstChild);e.appendChild(document.createTextNode(r))}}},959(r,e,o){var t=o(72),a=o.n(t),n=o(825),i=o.n(n),p=o(659),c=o.n(p),s=o(56),l=o.n(s),d=o(540),u=o.n(d),f=o(113),b=o.n(f),m=o(646),v={};v.styleTagTransform=b(),v.setAttributes=l(),v.insert=c().bind(null,"head"),v.domAPI=i(),v.insertStyleElement=u(),a()(m.A,v),m.A&&m.A.locals&&m.A.locals}}]);