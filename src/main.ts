document.getElementById('app')!.textContent = 'Millgrain'
