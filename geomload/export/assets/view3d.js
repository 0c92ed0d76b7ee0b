// The interactive 3-D view's page code (see geomload/export/view3d.py); __UID__ is replaced by
// the fragment's id. Needs three.js r160 (ES module) and its OrbitControls, loaded from blob URLs.
// three.js r160 lighting: Lambert diffuse = colour x irradiance / pi, so intensities of k*pi give
// k x the colour; ambient 0.65 + directional up to 0.45 keeps colours near their table values.
(function(){
var root=document.getElementById("__UID__");
function fail(e){root.dataset.error=String(e&&e.message||e);var m=root.querySelector(".gl3-msg");
m.textContent="3-D view unavailable in this browser: "+root.dataset.error;m.style.color="#a00";}
try{
var txt=function(s){return document.getElementById("__UID__-"+s).textContent;};
var blob=function(s){return URL.createObjectURL(new Blob([s],{type:"text/javascript"}));};
var uThree=blob(txt("lib"));
var uOrbit=blob(txt("orbit").replace(/from\s*['"]three['"]/g,"from '"+uThree+"'"));
var D=JSON.parse(txt("data"));
Promise.all([import(uThree),import(uOrbit)]).then(function(m){start(m[0],m[1].OrbitControls);}).catch(fail);
}catch(e){fail(e);}
function bytes(b){var s=atob(b),u=new Uint8Array(s.length);for(var i=0;i<s.length;i++)u[i]=s.charCodeAt(i);return u.buffer;}
function start(THREE,OrbitControls){try{
var canvas=root.querySelector(".gl3-canvas"),stage=root.querySelector(".gl3-stage");
var renderer=new THREE.WebGLRenderer({canvas:canvas,antialias:true,preserveDrawingBuffer:true});
renderer.setPixelRatio(window.devicePixelRatio||1);
var scene=new THREE.Scene();scene.background=new THREE.Color(0xf7f7f7);
var P=new Float32Array(bytes(D.points));
var I=D.index32?new Uint32Array(bytes(D.triangles)):new Uint16Array(bytes(D.triangles));
var geo=new THREE.BufferGeometry(),nv;
if(D.per_triangle){var Q=new Float32Array(I.length*3);for(var i=0;i<I.length;i++){for(var k=0;k<3;k++)Q[3*i+k]=P[3*I[i]+k];}
geo.setAttribute("position",new THREE.BufferAttribute(Q,3));nv=I.length;}
else{geo.setAttribute("position",new THREE.BufferAttribute(P,3));geo.setIndex(new THREE.BufferAttribute(I,1));nv=P.length/3;}
geo.computeVertexNormals();
var sCol=new Float32Array(nv*3);geo.setAttribute("color",new THREE.BufferAttribute(sCol,3));
function lin(t){return t.map(function(c){var o=new THREE.Color();o.setRGB(c[0]/255,c[1]/255,c[2]/255,THREE.SRGBColorSpace);return o;});}
var sTab=lin(D.surface_table),pTab=lin(D.spar_table),grey=new THREE.Color(0.5,0.5,0.5);
var wing=new THREE.Mesh(geo,new THREE.MeshLambertMaterial({vertexColors:true,transparent:true,opacity:D.opacity,side:THREE.DoubleSide,depthWrite:false}));
wing.renderOrder=1;scene.add(wing);
geo.computeBoundingSphere();var bs=geo.boundingSphere;
var SEG=12,spar=null,pCol=null,np=0;
if(D.spar_points){var S=new Float32Array(bytes(D.spar_points));np=S.length/3;
var r=bs.radius*0.012,pos=new Float32Array(np*SEG*3),idx=[],up=new THREE.Vector3(0,0,1);
var pt=function(i){return new THREE.Vector3(S[3*i],S[3*i+1],S[3*i+2]);};
for(var i=0;i<np;i++){var tg=pt(Math.min(i+1,np-1)).sub(pt(Math.max(i-1,0))).normalize();
var a=Math.abs(tg.z)>0.9?new THREE.Vector3(1,0,0):up.clone();var n1=new THREE.Vector3().crossVectors(tg,a).normalize();
var n2=new THREE.Vector3().crossVectors(tg,n1).normalize();var c=pt(i);
for(var j=0;j<SEG;j++){var th=2*Math.PI*j/SEG,v=c.clone().addScaledVector(n1,r*Math.cos(th)).addScaledVector(n2,r*Math.sin(th));
pos.set([v.x,v.y,v.z],3*(i*SEG+j));if(i<np-1){var a0=i*SEG+j,a1=i*SEG+(j+1)%SEG;idx.push(a0,a0+SEG,a1,a1,a0+SEG,a1+SEG);}}}
var sg=new THREE.BufferGeometry();sg.setAttribute("position",new THREE.BufferAttribute(pos,3));sg.setIndex(idx);sg.computeVertexNormals();
pCol=new Float32Array(np*SEG*3);sg.setAttribute("color",new THREE.BufferAttribute(pCol,3));
spar=new THREE.Mesh(sg,new THREE.MeshLambertMaterial({vertexColors:true}));spar.renderOrder=0;scene.add(spar);}
scene.add(new THREE.AmbientLight(0xffffff,0.65*Math.PI));
var cam=new THREE.PerspectiveCamera(30,1,bs.radius*0.01,bs.radius*50);cam.up.set(0,0,1);
var dl=new THREE.DirectionalLight(0xffffff,0.45*Math.PI);dl.position.set(0.3,-0.4,1);cam.add(dl);scene.add(cam);
var dir=new THREE.Vector3(-0.9,-0.9,0.8).normalize(),dist=bs.radius/Math.sin(15*Math.PI/180)*1.05;
geo.computeBoundingBox();var bb=geo.boundingBox,corners=[];
for(var i=0;i<8;i++)corners.push(new THREE.Vector3(i&1?bb.max.x:bb.min.x,i&2?bb.max.y:bb.min.y,i&4?bb.max.z:bb.min.z));
var ctl=new OrbitControls(cam,canvas);ctl.target.copy(bs.center);
function place(){cam.position.copy(bs.center).addScaledVector(dir,dist);cam.lookAt(bs.center);cam.updateMatrixWorld();}
function fit(){for(var it=0;it<4;it++){place();var m=0;corners.forEach(function(c){var q=c.clone().project(cam);m=Math.max(m,Math.abs(q.x),Math.abs(q.y));});
dist=Math.max(bs.radius*1.02,dist*(0.3+0.7*m/0.9));}place();ctl.update();}
var fitted=false;
function draw(){renderer.render(scene,cam);}
ctl.addEventListener("change",draw);
function resize(){var w=stage.clientWidth,h=stage.clientHeight;if(!w||!h)return;renderer.setSize(w,h,false);cam.aspect=w/h;cam.updateProjectionMatrix();if(!fitted){fit();fitted=true;}draw();}
var sel=root.querySelector(".gl3-case"),common=root.querySelector(".gl3-common");
function colours(b64,sc,all,tab,out,rep,perTri){var q=new Uint16Array(bytes(b64)),N=tab.length;
for(var i=0;i<q.length;i++){var col;if(q[i]>D.q_max)col=grey;else{var v=sc.lo+(sc.hi-sc.lo)*q[i]/D.q_max;
var t=(v-all.lo)/(all.hi-all.lo);col=tab[Math.max(0,Math.min(N-1,Math.floor(t*N)))];}
for(var k=0;k<rep;k++){var o=3*(perTri?3*i+k:i*rep+k);out[o]=col.r;out[o+1]=col.g;out[o+2]=col.b;}}}
function esc(t){return String(t).replace(/[&<>"]/g,function(c){return {"&":"&amp;","<":"&lt;",">":"&gt;",'"':"&quot;"}[c];});}
function bar(q,sc,label,table){var el=root.querySelector('.gl3-cb[data-q="'+q+'"]');if(!el)return;
var stops=table.map(function(c,i){return "rgb("+c+") "+(100*i/(table.length-1)).toFixed(1)+"%";}).join(",");
var h='<div style="margin:4px 0 2px;font-weight:bold">'+esc(label)+' ('+esc(sc.unit)+')</div><div style="display:flex;height:180px;margin:0.7em 0 1.2em">'
+'<div style="width:18px;border:1px solid #888;background:linear-gradient(to top,'+stops+')"></div><div style="position:relative;flex:1">';
for(var i=0;i<sc.ticks.length;i++){var f=(sc.ticks[i]-sc.lo)/(sc.hi-sc.lo);
h+='<div class="gl3-tick" style="position:absolute;left:4px;bottom:calc('+(100*f).toFixed(2)+'% - 0.6em);line-height:1.2em">'+esc(sc.labels[i])+'</div>';}
el.innerHTML=h+'</div></div>';}
function show(){var c=D.cases[+sel.value],all=common.checked;
var ss=all?D.surface_scale_all:c.surface_scale;
colours(c.surface,c.surface_scale,ss,sTab,sCol,D.per_triangle?3:1,D.per_triangle);geo.attributes.color.needsUpdate=true;
bar("surface",ss,D.labels.surface,D.surface_table);
if(spar){var ps=all?D.spar_scale_all:c.spar_scale;colours(c.spar,c.spar_scale,ps,pTab,pCol,SEG,false);
spar.geometry.attributes.color.needsUpdate=true;bar("spar",ps,D.labels.spar,D.spar_table);}
root.dataset.shown=c.name;draw();}
sel.addEventListener("change",show);common.addEventListener("change",show);
if(window.ResizeObserver)new ResizeObserver(resize).observe(stage);
resize();show();
root.gl3={project:function(x,y,z){var v=new THREE.Vector3(x,y,z).project(cam);  // CSS px in the canvas
return [canvas.clientWidth*(v.x+1)/2,canvas.clientHeight*(1-v.y)/2];}};
root.dataset.drawn="1";
}catch(e){fail(e);}}
})();
